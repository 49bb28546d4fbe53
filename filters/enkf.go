package filters

import (
	"errors"
	"math"
	"math/rand/v2"
)

// EnKFConfig configures NewEnKF. The zero value gives the defaults.
type EnKFConfig struct {
	// Members is the ensemble size N, at least 2. If zero, 100 is used.
	Members int
	// Inflation is the factor r >= 1 by which the deviations of the
	// forecast ensemble from its mean are multiplied before each update
	// (multiplicative covariance inflation, Anderson & Anderson 1999, "A
	// Monte Carlo implementation of the nonlinear filtering problem to
	// produce ensemble assimilations and forecasts", Monthly Weather Review
	// 127(12)); the forecast covariance grows by r². If zero, 1 is used
	// (no inflation).
	Inflation float64
}

// DefaultEnKFMembers is the ensemble size used when EnKFConfig.Members is
// zero.
const DefaultEnKFMembers = 100

// EnKF is the stochastic ensemble Kalman filter of Evensen 2003 ("The
// ensemble Kalman filter: theoretical formulation and practical
// implementation", Ocean Dynamics 53) with perturbed observations (Burgers,
// van Leeuwen & Evensen 1998, "Analysis scheme in the ensemble Kalman
// filter", Monthly Weather Review 126(6)). Members move through the model
// with sampled process noise, x_i ← F(x_i) + w_i (FW(x_i, w_i, k) for
// non-additive process noise), w_i ~ N(0, Q); the forecast deviations are
// then inflated about the mean by Inflation. An update with measurement z
// takes y_i = H(x_i), the ensemble covariances (normalised by N − 1)
//
//	Pyy = cov(y, y),  Pxy = cov(x, y),  S = Pyy + R,  K = Pxy S⁻¹,
//
// and moves every member by x_i ← x_i + K (z + v_i − y_i), v_i ~ N(0, R)
// drawn afresh for each member, so that the analysed ensemble has the
// Kalman posterior covariance in expectation. On a linear-Gaussian model
// the ensemble mean and covariance converge to the Kalman filter's as N
// grows (Mandel, Cobb & Beezley 2011, "On the convergence of the ensemble
// Kalman filter", Applications of Mathematics 56(6)).
//
// The estimate is the ensemble mean and the ensemble covariance (divided
// by N − 1); angle components of the state (Model.AngleState) use the
// circular mean and wrapped deviations, and measurement angles wrapped
// residuals. The innovation is z − ȳ with ȳ the mean of the y_i, and its
// covariance S above. The measurement noise must be additive (no HV); a
// MeasLogLik is not used, R being taken as the moment-matched covariance
// of the noise. Reset draws the members from N(x0, p0) (p0 and Q may be
// positive semi-definite, R too, but S must be positive definite, else
// Update returns ErrNotPosDef).
//
// EnKF implements Filter and Innovator. It does not implement ESSer: its
// members carry no weights, so an effective sample size would only repeat
// N. All randomness comes from the stream passed to Reset (NormFloat64).
type EnKF struct {
	m       *Model
	n       int     // members
	inflate float64 // deviation factor r

	lq    []float64 // PSD lower factor of Q, Nw*Nw
	qcols []int     // its nonzero columns
	lr    []float64 // PSD lower factor of R, Nz*Nz (of the step's R with Model.RAt)
	rcols []int     // its nonzero columns
	rbuf  []float64 // Model.RAt's value, Nz*Nz

	rng *rand.Rand

	x         []float64 // members, n*Nx
	alt       []float64 // transition output, n*Nx
	mean, cov []float64 // estimate, Nx and Nx*Nx
	estOK     bool
	nu, s     []float64 // innovation and S, Nz and Nz*Nz
	haveInnov bool

	// workspace, sized in NewEnKF
	y   []float64 // member measurements, n*Nz
	ym  []float64 // their mean, Nz
	dx  []float64 // state deviations, n*Nx
	dy  []float64 // measurement deviations, n*Nz
	pxy []float64 // Pxy, then the gain K, Nx*Nz
	ls  []float64 // Cholesky factor of S, Nz*Nz
	d   []float64 // one innovation z + v − y, Nz
	e   []float64 // standard normal draws, max(Nx, Nw, Nz)
	nw  []float64 // one process noise draw, Nw (FW)
	l0  []float64 // PSD factor of p0, Nx*Nx
	p0c []int
	res []float64 // moment residuals, n*max(Nx, Nz)
}

var (
	_ Filter    = (*EnKF)(nil)
	_ Innovator = (*EnKF)(nil)
)

// NewEnKF returns an ensemble Kalman filter for m. It returns ErrNotPosDef
// if Q or R is not positive semi-definite, and an error if the config is
// out of range or the measurement noise of m is not additive.
func NewEnKF(m *Model, cfg EnKFConfig) (*EnKF, error) {
	m.check()
	if m.Manifold != nil {
		return nil, ErrManifold
	}
	if m.HV != nil {
		return nil, errors.New("filters: enkf: needs additive measurement noise; the model's enters through HV")
	}
	n := cfg.Members
	if n == 0 {
		n = DefaultEnKFMembers
	}
	if n < 2 || n > math.MaxInt32 {
		return nil, errors.New("filters: enkf: Members must be in [2, 2^31-1]")
	}
	r := cfg.Inflation
	if r == 0 {
		r = 1
	}
	if !(r >= 1) || math.IsInf(r, 0) {
		return nil, errors.New("filters: enkf: Inflation must be finite and at least 1")
	}
	nx, nz := m.Nx, m.Nz
	nwd := nx
	if m.FW != nil {
		nwd = m.Nw
	}
	nm := max(nx, nz)
	f := &EnKF{
		m: m, n: n, inflate: r,
		lq:   make([]float64, nwd*nwd),
		lr:   make([]float64, nz*nz),
		rbuf: make([]float64, nz*nz),
		x:    make([]float64, n*nx),
		alt:  make([]float64, n*nx),
		mean: make([]float64, nx),
		cov:  make([]float64, nx*nx),
		nu:   make([]float64, nz),
		s:    make([]float64, nz*nz),
		y:    make([]float64, n*nz),
		ym:   make([]float64, nz),
		dx:   make([]float64, n*nx),
		dy:   make([]float64, n*nz),
		pxy:  make([]float64, nx*nz),
		ls:   make([]float64, nz*nz),
		d:    make([]float64, nz),
		e:    make([]float64, max(nm, nwd)),
		nw:   make([]float64, nwd),
		l0:   make([]float64, nx*nx),
		p0c:  make([]int, 0, nx),
		res:  make([]float64, n*nm),
	}
	if !semiChol(f.lq, m.Q, nwd) || !semiChol(f.lr, m.R, nz) {
		return nil, ErrNotPosDef
	}
	f.qcols = nonzeroCols(nil, f.lq, nwd)
	f.rcols = nonzeroCols(make([]int, 0, nz), f.lr, nz)
	return f, nil
}

// Reset draws the members from N(x0, p0).
func (f *EnKF) Reset(x0, p0 []float64, rng *rand.Rand) error {
	nx := f.m.Nx
	if len(x0) != nx || len(p0) != nx*nx {
		panic("filters: enkf: dimension mismatch")
	}
	if rng == nil {
		panic("filters: enkf: Reset needs a random stream")
	}
	f.rng = rng
	f.estOK, f.haveInnov = false, false
	if !allFinite(x0) {
		return ErrNonFinite
	}
	if !semiChol(f.l0, p0, nx) {
		return ErrNotPosDef
	}
	f.p0c = nonzeroCols(f.p0c[:0], f.l0, nx)
	for i := 0; i < f.n; i++ {
		xi := f.x[i*nx : i*nx+nx]
		copy(xi, x0)
		f.addNoise(xi, f.l0, f.p0c)
	}
	return nil
}

// addNoise adds l e to v, l lower triangular (len(v) square) with nonzero
// columns cols, e standard normal.
func (f *EnKF) addNoise(v, l []float64, cols []int) { addFactorNoise(v, l, cols, f.e, f.rng) }

// Predict moves every member to step k with sampled process noise and
// inflates the deviations.
func (f *EnKF) Predict(k int) error {
	m := f.m
	nx := m.Nx
	switch {
	case m.FW != nil:
		for i := 0; i < f.n; i++ {
			clear(f.nw)
			f.addNoise(f.nw, f.lq, f.qcols)
			m.FW(f.alt[i*nx:i*nx+nx], f.x[i*nx:i*nx+nx], f.nw, k)
		}
	default:
		m.fAll(f.alt, f.x, k)
		for i := 0; i < f.n; i++ {
			f.addNoise(f.alt[i*nx:i*nx+nx], f.lq, f.qcols)
		}
	}
	f.x, f.alt = f.alt, f.x
	f.haveInnov = false
	if f.inflate != 1 {
		f.deviations(f.dx, f.mean, f.x, nx, m.AngleState)
		r := f.inflate
		for i, d := range f.dx {
			f.x[i] = f.x[i] - d + r*d // x̄ + r(x − x̄), angles wrapped below
		}
		wrapComponents(f.x, nx, m.AngleState)
	}
	f.estOK = false
	return nil
}

// deviations sets mean (d) to the mean of the points v (d values each;
// circular for the angle components) and dev to v minus it (wrapped).
func (f *EnKF) deviations(dev, mean, v []float64, d int, angles []int) {
	n := len(v) / d
	for j := 0; j < d; j++ {
		mean[j] = wsum1(v[j:], nil, d) / float64(n)
	}
	for _, j := range angles {
		var sn, cs float64
		for i := j; i < len(v); i += d {
			s, c := math.Sincos(v[i])
			sn += s
			cs += c
		}
		mean[j] = math.Atan2(sn, cs)
	}
	for i := 0; i < len(v); i += d {
		for j := 0; j < d; j++ {
			dev[i+j] = v[i+j] - mean[j]
		}
	}
	wrapComponents(dev, d, angles)
}

// Update moves the members by the perturbed-observation analysis; z == nil
// leaves them as predicted.
func (f *EnKF) Update(z []float64, k int) error {
	f.haveInnov = false
	if z == nil {
		f.estimate()
		return f.checkEstimate()
	}
	m := f.m
	nx, nz := m.Nx, m.Nz
	if len(z) != nz {
		panic("filters: enkf: dimension mismatch")
	}
	r := m.R
	if m.RAt != nil { // this step's R and its factor for the perturbations
		r = m.rAt(f.rbuf, k)
		if !semiChol(f.lr, r, nz) {
			return ErrNotPosDef
		}
		f.rcols = nonzeroCols(f.rcols[:0], f.lr, nz)
	}
	m.hAll(f.y, f.x, k)
	f.deviations(f.dx, f.mean, f.x, nx, m.AngleState)
	f.deviations(f.dy, f.ym, f.y, nz, m.AngleMeas)
	c := 1 / float64(f.n-1)
	for a := 0; a < nz; a++ {
		for b := 0; b <= a; b++ {
			v := wsum2(f.dy[a:], f.dy[b:], nil, nz)*c + r[a*nz+b]
			f.s[a*nz+b], f.s[b*nz+a] = v, v
		}
	}
	for a := 0; a < nx; a++ {
		for b := 0; b < nz; b++ {
			f.pxy[a*nz+b] = wsum2x(f.dx[a:], nx, f.dy[b:], nz, f.n) * c
		}
	}
	for j := range f.nu {
		f.nu[j] = z[j] - f.ym[j]
	}
	for _, j := range m.AngleMeas {
		f.nu[j] = wrapAngle(f.nu[j])
	}
	if !cholesky(f.ls, f.s, nz) {
		return ErrNotPosDef
	}
	cholSolveRowsT(f.ls, f.pxy, nx, nz) // K = Pxy S⁻¹
	d := f.d
	for i := 0; i < f.n; i++ {
		yi := f.y[i*nz : i*nz+nz]
		for j := range d {
			d[j] = z[j] - yi[j]
		}
		f.addNoise(d, f.lr, f.rcols)
		for _, j := range m.AngleMeas {
			d[j] = wrapAngle(d[j])
		}
		xi := f.x[i*nx : i*nx+nx]
		for a := range xi {
			ka := f.pxy[a*nz : a*nz+nz]
			var s float64
			for j, v := range d {
				s += ka[j] * v
			}
			xi[a] += s
		}
	}
	wrapComponents(f.x, nx, m.AngleState)
	f.estimate()
	if err := f.checkEstimate(); err != nil {
		return err
	}
	f.haveInnov = true
	return nil
}

// wsum2x returns Σ_i x[i*dx] y[i*dy] over n points.
func wsum2x(x []float64, dx int, y []float64, dy int, n int) float64 {
	var s float64
	for i := 0; i < n; i++ {
		s += x[i*dx] * y[i*dy]
	}
	return s
}

// estimate sets mean and cov to the ensemble mean and covariance (N − 1).
func (f *EnKF) estimate() {
	nx := f.m.Nx
	weightedMoments(f.mean, f.cov, f.x, nil, nx, f.m.AngleState, f.res[:len(f.x)])
	c := float64(f.n) / float64(f.n-1)
	for i := range f.cov {
		f.cov[i] *= c
	}
	f.estOK = true
}

func (f *EnKF) checkEstimate() error {
	if !allFinite(f.mean) || !allFinite(f.cov) {
		return ErrNonFinite
	}
	return nil
}

// EstimateTo copies the ensemble mean into x and, if p is not nil, the
// ensemble covariance into p.
func (f *EnKF) EstimateTo(x, p []float64) {
	nx := f.m.Nx
	if len(x) != nx || (p != nil && len(p) != nx*nx) {
		panic("filters: enkf: dimension mismatch")
	}
	if !f.estOK {
		f.estimate()
	}
	copy(x, f.mean)
	if p != nil {
		copy(p, f.cov)
	}
}

// InnovationTo copies the innovation z − ȳ of the last Update and, if s is
// not nil, S = Pyy + R. It reports false after Reset or Predict until an
// Update with a measurement succeeds.
func (f *EnKF) InnovationTo(nu, s []float64) bool {
	nz := f.m.Nz
	if len(nu) != nz || (s != nil && len(s) != nz*nz) {
		panic("filters: enkf: dimension mismatch")
	}
	if !f.haveInnov {
		return false
	}
	copy(nu, f.nu)
	if s != nil {
		copy(s, f.s)
	}
	return true
}
