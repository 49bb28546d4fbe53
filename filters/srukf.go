package filters

import (
	"errors"
	"math"
	"math/rand/v2"
)

// SRUKFConfig configures NewSRUKF. The zero value gives the defaults.
type SRUKFConfig struct {
	// Alpha, Beta, Kappa are the scaled unscented parameters as in
	// UKFConfig, with the same zero-value rule: if all three are zero, 1,
	// 2, 0 are used; otherwise Alpha zero means 1.
	Alpha, Beta, Kappa float64
	// Jitter and JitterMax configure the jitter repair as in UKFConfig.
	// The SRUKF factors a covariance only at Reset and when a downdate
	// fails; then, with the repair on, it forms the downdated covariance
	// explicitly and factors it with the jitter. Default 0: off.
	Jitter, JitterMax float64
}

// SRUKF is the square-root unscented Kalman filter of van der Merwe & Wan
// 2001, "The square-root unscented Kalman filter for state and parameter
// estimation", ICASSP, for additive noise: it propagates the lower
// Cholesky factor S of P (P = S Sᵀ) instead of P, with the scaled
// unscented set (Julier 2002; parameters Alpha 1, Beta 2, Kappa 0 as in
// UKFConfig, λ = α²(n+κ) − n, Wᵢ = 1/(2(n+λ)), Wc₀ = λ/(n+λ) + 1 − α² + β).
//
// Predict: points x, x ± √(n+λ) Sⱼ through F, mean x̄, then
//
//	S⁻ = qr([√Wᵢ (Y₁..₂ₙ − x̄)  √Q]),  S⁻ = cholupdate(S⁻, Y₀ − x̄, Wc₀),
//
// the QR (Householder, on the compound matrix's rows) giving the
// triangular factor of Σᵢ₌₁..₂ₙ Wᵢ dᵢdᵢᵀ + Q and the rank-one update (a
// downdate if Wc₀ < 0) adding the central point. Update draws fresh points
// from x̄, S⁻ (as the UKF does), and forms Sz the same way from the
// measurement deviations and √R, Pxz = Σ Wcᵢ (Xᵢ − x̄)(Zᵢ − ẑ)ᵀ,
// K = Pxz (Sz Szᵀ)⁻¹ by two triangular solves, x = x̄ + K ν and
//
//	S = cholupdate(S⁻, K Sz, −1),
//
// one rank-one downdate per column of U = K Sz. √Q and √R are lower
// triangular factors computed at Reset (√R in each Update instead when the
// model has RAt); singular Q or R are allowed (zero columns). A downdate that fails (the covariance would not be positive
// definite) returns ErrNotPosDef, unless the jitter repair is on.
//
// The square-root form keeps P = S Sᵀ symmetric positive semi-definite by
// construction, and its factors have the square root of P's condition
// number. On a linear-Gaussian model the SRUKF equals the Kalman filter,
// and in exact arithmetic it equals the UKF with the same parameters.
// Angles are handled as in UKF. It needs additive noise (NewSRUKF refuses
// a model with FW or HV). It implements Filter, Innovator and Repairer.
type SRUKF struct {
	m      *Model
	nx, nz int
	set    sigmaSet
	jit    jitter

	x  []float64 // mean (nx)
	sl []float64 // lower Cholesky factor S of P (nx*nx)

	hasInnov bool

	// workspace, sized at set-up, reused every step
	lq   []float64 // lower square root of Q (nx*nx), set at Reset
	lr   []float64 // lower square root of R (nz*nz), set at Reset, and in each Update with Model.RAt
	rbuf []float64 // Model.RAt's value (nz*nz)
	dxT  []float64 // point deviations √(n+λ)·(±Sⱼ), transposed: nx x np
	pts  []float64 // sigma points, np x nx
	ys   []float64 // propagated points, np x nx
	zs   []float64 // point measurements, np x nz
	dt   []float64 // deviations from a mean, transposed: max(nx,nz) x np
	cmp  []float64 // compound matrix for the QR: max(nx,nz) x (2n + max(nx,nz))
	d0   []float64 // weighted central deviation for cholupdate (max(nx,nz))
	zhat []float64 // predicted measurement (nz)
	nu   []float64 // innovation (nz)
	sz   []float64 // lower factor of S (nz*nz)
	s    []float64 // S = Sz Szᵀ, for InnovationTo (nz*nz)
	pxz  []float64 // cross covariance (nx*nz), then the gain K
	u    []float64 // U = K Sz, transposed: column j of U is row j (nz x nx)
	col  []float64 // one column of U for a downdate (nx)
	back []float64 // a factor before its downdates, for the repair (max(nx,nz)²)
	p    []float64 // P0 at Reset, a covariance to repair (max(nx,nz)²)
}

// NewSRUKF returns a square-root unscented Kalman filter for m.
func NewSRUKF(m *Model, cfg SRUKFConfig) (*SRUKF, error) {
	m.check()
	if m.Manifold != nil {
		return nil, ErrManifold
	}
	checkAngles(m)
	if !m.Additive() {
		return nil, errors.New("filters: srukf needs additive noise (the model has FW or HV)")
	}
	c := UKFConfig{Alpha: cfg.Alpha, Beta: cfg.Beta, Kappa: cfg.Kappa}.resolved()
	set, err := scaledSet(m.Nx, c.Alpha, c.Beta, c.Kappa)
	if err != nil {
		return nil, errors.New("filters: srukf: " + err.Error())
	}
	jit, err := newJitter("srukf", cfg.Jitter, cfg.JitterMax)
	if err != nil {
		return nil, err
	}
	nx, nz := m.Nx, m.Nz
	np := set.np
	rows := max(nx, nz)
	return &SRUKF{
		m: m, nx: nx, nz: nz, set: set, jit: jit,
		x:    make([]float64, nx),
		sl:   make([]float64, nx*nx),
		lq:   make([]float64, nx*nx),
		lr:   make([]float64, nz*nz),
		rbuf: make([]float64, nz*nz),
		dxT:  make([]float64, nx*np),
		pts:  make([]float64, np*nx),
		ys:   make([]float64, np*nx),
		zs:   make([]float64, np*nz),
		dt:   make([]float64, rows*np),
		cmp:  make([]float64, rows*(np-1+rows)),
		d0:   make([]float64, rows),
		zhat: make([]float64, nz),
		nu:   make([]float64, nz),
		sz:   make([]float64, nz*nz),
		s:    make([]float64, nz*nz),
		pxz:  make([]float64, nx*nz),
		u:    make([]float64, nz*nx),
		col:  make([]float64, nx),
		back: make([]float64, rows*rows),
		p:    make([]float64, rows*rows),
	}, nil
}

// Reset implements Filter. rng is not used. It factors p0 (with the jitter
// repair, if on) and the noise covariances.
func (f *SRUKF) Reset(x0, p0 []float64, rng *rand.Rand) error {
	nx := f.nx
	if len(x0) != nx || len(p0) != nx*nx {
		panic("filters: dimension mismatch")
	}
	p := f.p[:nx*nx]
	copy(f.x, x0)
	copy(p, p0)
	symmetrize(p, nx)
	f.hasInnov = false
	f.jit.repairs = 0
	if !allFinite(f.x) || !allFinite(p) {
		return ErrNonFinite
	}
	if !f.jit.chol(f.sl, p, nx) {
		return ErrNotPosDef
	}
	if !semiChol(f.lq, f.m.Q, nx) || !semiChol(f.lr, f.m.R, f.nz) {
		return ErrNotPosDef
	}
	return nil
}

// sqrtCov writes into dst (m x m, lower) the square root of
// Σᵢ Wcᵢ dᵢ dᵢᵀ + N N ᵀ for transposed deviations dt (m x np) and a noise
// square root nsq (m x m): the QR of the compound matrix and a rank-one
// update (or downdate) for the central point. It reports false if the
// downdate fails; dst then holds the factor before it, in back if the
// repair may need it.
func (f *SRUKF) sqrtCov(dst, dt, nsq []float64, m int) bool {
	s := &f.set
	np := s.np
	w := s.wu
	mc := np - 1 + m
	cmp := f.cmp[:m*mc]
	sw := math.Sqrt(w)
	for r := 0; r < m; r++ {
		row := cmp[r*mc : r*mc+mc]
		src := dt[r*np+1 : r*np+np]
		for i, v := range src {
			row[i] = sw * v
		}
		copy(row[np-1:], nsq[r*m:r*m+m])
	}
	lqLower(dst, cmp, m, mc)
	wc0 := s.wc[0]
	if wc0 == 0 {
		return true
	}
	d0 := f.d0[:m]
	sc := math.Sqrt(math.Abs(wc0))
	for r := 0; r < m; r++ {
		d0[r] = sc * dt[r*np]
	}
	if wc0 > 0 {
		cholUpdate(dst, d0, m)
		return true
	}
	copy(f.back[:m*m], dst)
	if cholDowndate(dst, d0, m) {
		return true
	}
	return f.repairDowndate(dst, dt, m, sc)
}

// repairDowndate, with the jitter repair on, forms L Lᵀ − d dᵀ from the
// factor in f.back and the central deviation (scaled by sc), and factors
// it with the jitter into dst. It reports false if the repair is off or
// fails.
func (f *SRUKF) repairDowndate(dst, dt []float64, m int, sc float64) bool {
	if f.jit.eps0 == 0 {
		return false
	}
	np := f.set.np
	p := f.p[:m*m]
	mulLLt(p, f.back[:m*m], m)
	for a := 0; a < m; a++ {
		for b := 0; b < m; b++ {
			p[a*m+b] -= sc * dt[a*np] * sc * dt[b*np]
		}
	}
	return f.jit.chol(dst, p, m)
}

// Predict implements Filter.
func (f *SRUKF) Predict(k int) error {
	nx := f.nx
	s := &f.set
	f.hasInnov = false
	s.devTo(f.dxT, f.sl)
	s.pointsTo(f.pts, f.x, f.dxT)
	f.m.fAll(f.ys, f.pts, k)

	s.mean(f.x, f.ys, nx, f.m.AngleState)
	s.deviate(f.dt, f.ys, f.x, nx, f.m.AngleState)
	if !f.sqrtCov(f.sl, f.dt, f.lq, nx) {
		return ErrNotPosDef
	}
	if !allFinite(f.x) || !allFinite(f.sl) {
		return ErrNonFinite
	}
	return nil
}

// Update implements Filter.
func (f *SRUKF) Update(z []float64, k int) error {
	f.hasInnov = false
	if z == nil {
		return nil
	}
	nx, nz := f.nx, f.nz
	if len(z) != nz {
		panic("filters: dimension mismatch")
	}
	s := &f.set
	// A per-step R: its square root for this step (R's again when RAt
	// reports none, as an earlier step may have replaced it).
	if f.m.RAt != nil && !semiChol(f.lr, f.m.rAt(f.rbuf, k), nz) {
		return ErrNotPosDef
	}
	s.devTo(f.dxT, f.sl)
	s.pointsTo(f.pts, f.x, f.dxT)
	f.m.hAll(f.zs, f.pts, k)
	s.mean(f.zhat, f.zs, nz, f.m.AngleMeas)
	s.deviate(f.dt, f.zs, f.zhat, nz, f.m.AngleMeas)
	if !f.sqrtCov(f.sz, f.dt, f.lr, nz) {
		return ErrNotPosDef
	}
	for i := 0; i < nz; i++ {
		if !(f.sz[i*nz+i] > 0) {
			return ErrNotPosDef // S singular: no gain
		}
	}
	// Pxz = Σ Wcᵢ dxᵢ dzᵢᵀ; the central point has dx₀ = 0.
	s.cross(f.pxz, f.dxT, f.dt, nx, nz)
	cholSolveRowsT(f.sz, f.pxz, nx, nz) // now K
	kg := f.pxz

	for i := range f.nu {
		f.nu[i] = z[i] - f.zhat[i]
	}
	for _, i := range f.m.AngleMeas {
		f.nu[i] = wrapAngle(f.nu[i])
	}
	for i := 0; i < nx; i++ {
		ki := kg[i*nz : i*nz+nz]
		var d float64
		for j, kv := range ki {
			d += kv * f.nu[j]
		}
		f.x[i] += d
	}
	for _, i := range f.m.AngleState {
		f.x[i] = wrapAngle(f.x[i])
	}

	// U = K Sz (Sz lower): column j of U, stored as row j of u.
	for j := 0; j < nz; j++ {
		uj := f.u[j*nx : j*nx+nx]
		for r := 0; r < nx; r++ {
			kr := kg[r*nz : r*nz+nz]
			var a float64
			for l := j; l < nz; l++ {
				a += kr[l] * f.sz[l*nz+j]
			}
			uj[r] = a
		}
	}
	copy(f.back[:nx*nx], f.sl)
	for j := 0; j < nz; j++ {
		copy(f.col, f.u[j*nx:j*nx+nx])
		if !cholDowndate(f.sl, f.col, nx) {
			if !f.repairUpdate() {
				return ErrNotPosDef
			}
			break
		}
	}
	mulLLt(f.s, f.sz, nz)
	if !allFinite(f.x) || !allFinite(f.sl) {
		return ErrNonFinite
	}
	f.hasInnov = true
	return nil
}

// repairUpdate, with the jitter repair on, forms S⁻S⁻ᵀ − U Uᵀ from the
// factor before the downdates and factors it with the jitter into f.sl.
func (f *SRUKF) repairUpdate() bool {
	if f.jit.eps0 == 0 {
		return false
	}
	nx, nz := f.nx, f.nz
	p := f.p[:nx*nx]
	mulLLt(p, f.back[:nx*nx], nx)
	for j := 0; j < nz; j++ {
		uj := f.u[j*nx : j*nx+nx]
		for a := 0; a < nx; a++ {
			for b := 0; b < nx; b++ {
				p[a*nx+b] -= uj[a] * uj[b]
			}
		}
	}
	symmetrize(p, nx)
	return f.jit.chol(f.sl, p, nx)
}

// EstimateTo implements Filter: the mean and P = S Sᵀ.
func (f *SRUKF) EstimateTo(x, p []float64) {
	if len(x) != f.nx || (p != nil && len(p) != f.nx*f.nx) {
		panic("filters: dimension mismatch")
	}
	copy(x, f.x)
	if p != nil {
		mulLLt(p, f.sl, f.nx)
	}
}

// SqrtTo copies the lower Cholesky factor S of the covariance (P = S Sᵀ)
// into s (nx*nx).
func (f *SRUKF) SqrtTo(s []float64) {
	if len(s) != f.nx*f.nx {
		panic("filters: dimension mismatch")
	}
	copy(s, f.sl)
}

// InnovationTo implements Innovator. s may be nil. It reports false after
// Predict until an Update with a measurement succeeds.
func (f *SRUKF) InnovationTo(nu, s []float64) bool {
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

// Repairs implements Repairer: the jitter repairs since Reset.
func (f *SRUKF) Repairs() int { return f.jit.repairs }
