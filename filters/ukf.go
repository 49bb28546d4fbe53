package filters

import "math/rand/v2"

// UKFConfig holds the parameters of the scaled unscented transform
// (Julier 2002, "The scaled unscented transformation"; Wan & van der Merwe
// 2000, "The unscented Kalman filter for nonlinear estimation"), with
// λ = Alpha²(n+Kappa) − n for state dimension n.
//
// The zero UKFConfig means DefaultUKF(): Alpha 1, Beta 2, Kappa 0. Any
// other value is taken as given, except that Alpha zero means 1; so to
// change one parameter and keep the others' defaults, start from
// DefaultUKF().
type UKFConfig struct {
	// Alpha (> 0) scales the spread of the sigma points about the mean.
	// If zero, 1 is used.
	Alpha float64
	// Beta adds (1 − Alpha² + Beta) to the central point's covariance
	// weight; 2 is the choice for Gaussian distributions (Julier 2002).
	// Used as given, except in the zero UKFConfig, where it is 2.
	Beta float64
	// Kappa is the secondary scaling parameter; n + Kappa must be positive.
	// Default 0.
	Kappa float64
}

// DefaultUKF returns the default unscented parameters: Alpha 1, Beta 2,
// Kappa 0. With these λ = 0: the central point has no weight in the mean,
// weight 2 in the covariance, and the other points lie at ±√n standard
// deviations along the Cholesky columns.
func DefaultUKF() UKFConfig { return UKFConfig{Alpha: 1, Beta: 2, Kappa: 0} }

// resolved returns the parameters NewUKF uses for c.
func (c UKFConfig) resolved() UKFConfig {
	if c == (UKFConfig{}) {
		return DefaultUKF()
	}
	if c.Alpha == 0 {
		c.Alpha = 1
	}
	return c
}

// UKF is the unscented Kalman filter for additive noise (Julier & Uhlmann
// 1997, "A new extension of the Kalman filter to nonlinear systems"; with
// the scaled sigma points of Julier 2002 and the algorithm as in Wan & van
// der Merwe 2000, "The unscented Kalman filter for nonlinear estimation").
// Parameters: UKFConfig (defaults Alpha 1, Beta 2, Kappa 0).
//
// Predict forms 2n+1 sigma points from the Cholesky factor of P, passes
// them through F (FMany when set), and takes their weighted mean and
// covariance plus Q. Update forms a fresh set of sigma points from the
// predicted mean and covariance (so that Q is reflected in them), passes
// them through H (HMany when set), and forms the predicted measurement,
// S = Σ Wc (Zᵢ−ẑ)(Zᵢ−ẑ)ᵀ + R, the cross covariance Pxz, the gain
// K = Pxz S⁻¹ (by Cholesky of S), x += K ν and P −= K Pxzᵀ, symmetrised.
//
// Angles: for Model.AngleMeas components the predicted measurement is the
// weighted circular mean of the sigma-point measurements and their
// deviations and the innovation are wrapped to (-π, π]; Model.AngleState
// components are treated the same way in the state mean and deviations,
// and wrapped in the estimate.
//
// On a linear-Gaussian model the UKF equals the Kalman filter for any valid
// parameters. It returns ErrNotPosDef when P or S has no Cholesky factor.
// It implements Filter and Innovator.
type UKF struct {
	m      *Model
	nx, nz int
	w      sigmaWeights

	x []float64 // mean (nx)
	p []float64 // covariance (nx*nx)

	hasInnov bool // the last Update had a measurement and succeeded

	// workspace, sized at set-up, reused every step
	l    []float64 // Cholesky factor of P (nx*nx)
	xs   []float64 // sigma points, (2nx+1) x nx
	ys   []float64 // propagated sigma points, (2nx+1) x nx
	zs   []float64 // sigma-point measurements, (2nx+1) x nz
	dt   []float64 // deviations from the mean, transposed: nx x (2nx+1) (nz rows in Update)
	zhat []float64 // predicted measurement (nz)
	nu   []float64 // innovation, angles wrapped (nz)
	s    []float64 // innovation covariance S (nz*nz)
	ls   []float64 // Cholesky factor of S (nz*nz)
	pxz  []float64 // cross covariance Pxz (nx*nz)
	k    []float64 // gain K (nx*nz)
}

// NewUKF returns an unscented Kalman filter for m with the parameters cfg
// (see UKFConfig for the zero value). It fails if Alpha is not positive or
// Nx + Kappa is not positive.
func NewUKF(m *Model, cfg UKFConfig) (*UKF, error) {
	m.check()
	checkAngles(m)
	c := cfg.resolved()
	w, err := newSigmaWeights(m.Nx, c.Alpha, c.Beta, c.Kappa)
	if err != nil {
		return nil, err
	}
	nx, nz := m.Nx, m.Nz
	np := 2*nx + 1
	return &UKF{
		m: m, nx: nx, nz: nz, w: w,
		x:    make([]float64, nx),
		p:    make([]float64, nx*nx),
		l:    make([]float64, nx*nx),
		xs:   make([]float64, np*nx),
		ys:   make([]float64, np*nx),
		zs:   make([]float64, np*nz),
		dt:   make([]float64, max(nx, nz)*np),
		zhat: make([]float64, nz),
		nu:   make([]float64, nz),
		s:    make([]float64, nz*nz),
		ls:   make([]float64, nz*nz),
		pxz:  make([]float64, nx*nz),
		k:    make([]float64, nx*nz),
	}, nil
}

// Reset implements Filter. rng is not used.
func (f *UKF) Reset(x0, p0 []float64, rng *rand.Rand) error {
	if len(x0) != f.nx || len(p0) != f.nx*f.nx {
		panic("filters: dimension mismatch")
	}
	copy(f.x, x0)
	copy(f.p, p0)
	f.hasInnov = false
	if !allFinite(f.x) || !allFinite(f.p) {
		return ErrNonFinite
	}
	return nil
}

// Predict implements Filter.
func (f *UKF) Predict(k int) error {
	nx := f.nx
	f.hasInnov = false
	if !f.w.points(f.xs, f.l, f.x, f.p) {
		return ErrNotPosDef
	}
	if f.m.FMany != nil {
		f.m.FMany(f.ys, f.xs, k)
	} else {
		for i := 0; i <= 2*nx; i++ {
			f.m.F(f.ys[i*nx:(i+1)*nx], f.xs[i*nx:(i+1)*nx], k)
		}
	}
	f.w.mean(f.x, f.ys, nx, f.m.AngleState)
	f.w.deviate(f.dt, f.ys, f.x, nx, f.m.AngleState)
	f.w.cov(f.p, f.dt, nx)
	for i, q := range f.m.Q {
		f.p[i] += q
	}
	symmetrize(f.p, nx)
	if !allFinite(f.x) || !allFinite(f.p) {
		return ErrNonFinite
	}
	return nil
}

// Update implements Filter.
func (f *UKF) Update(z []float64, k int) error {
	f.hasInnov = false
	if z == nil {
		return nil
	}
	nx, nz := f.nx, f.nz
	if len(z) != nz {
		panic("filters: dimension mismatch")
	}
	if !f.w.points(f.xs, f.l, f.x, f.p) {
		return ErrNotPosDef
	}
	if f.m.HMany != nil {
		f.m.HMany(f.zs, f.xs, k)
	} else {
		for i := 0; i <= 2*nx; i++ {
			f.m.H(f.zs[i*nz:(i+1)*nz], f.xs[i*nx:(i+1)*nx], k)
		}
	}
	f.w.mean(f.zhat, f.zs, nz, f.m.AngleMeas)
	f.w.deviate(f.dt, f.zs, f.zhat, nz, f.m.AngleMeas)
	f.w.cov(f.s, f.dt, nz)
	for i, r := range f.m.R {
		f.s[i] += r
	}
	symmetrize(f.s, nz)
	if !cholesky(f.ls, f.s, nz) {
		return ErrNotPosDef
	}
	f.w.crossFromChol(f.pxz, f.l, f.dt, nz)
	copy(f.k, f.pxz)
	cholSolveRowsT(f.ls, f.k, nx, nz)

	for i := range f.nu {
		f.nu[i] = z[i] - f.zhat[i]
	}
	for _, i := range f.m.AngleMeas {
		f.nu[i] = wrapAngle(f.nu[i])
	}
	for i := 0; i < nx; i++ {
		ki := f.k[i*nz : i*nz+nz]
		var d float64
		for j, kv := range ki {
			d += kv * f.nu[j]
		}
		f.x[i] += d
	}
	for _, i := range f.m.AngleState {
		f.x[i] = wrapAngle(f.x[i])
	}
	// P −= K Pxzᵀ (= K S Kᵀ)
	for i := 0; i < nx; i++ {
		ki := f.k[i*nz : i*nz+nz]
		for j := i; j < nx; j++ {
			pj := f.pxz[j*nz : j*nz+nz]
			var d float64
			for l, kv := range ki {
				d += kv * pj[l]
			}
			f.p[i*nx+j] -= d
		}
	}
	for i := 0; i < nx; i++ { // mirror the upper triangle
		for j := i + 1; j < nx; j++ {
			f.p[j*nx+i] = f.p[i*nx+j]
		}
	}
	if !allFinite(f.x) || !allFinite(f.p) {
		return ErrNonFinite
	}
	f.hasInnov = true
	return nil
}

// EstimateTo implements Filter.
func (f *UKF) EstimateTo(x, p []float64) {
	if len(x) != f.nx || (p != nil && len(p) != f.nx*f.nx) {
		panic("filters: dimension mismatch")
	}
	copy(x, f.x)
	if p != nil {
		copy(p, f.p)
	}
}

// InnovationTo implements Innovator. s may be nil. It reports false after
// Predict until an Update with a measurement succeeds.
func (f *UKF) InnovationTo(nu, s []float64) bool {
	if len(nu) != f.nz || (s != nil && len(s) != f.nz*f.nz) {
		panic("filters: dimension mismatch")
	}
	if !f.hasInnov {
		return false
	}
	copy(nu, f.nu)
	if s != nil {
		copy(s, f.s)
	}
	return true
}
