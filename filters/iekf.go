package filters

import (
	"errors"
	"math"
	"math/rand/v2"
)

// IEKFConfig configures NewIEKF. The zero value gives the defaults.
type IEKFConfig struct {
	// MaxIter is the largest number of Gauss-Newton iterations of one
	// measurement update (1 gives the EKF). If zero, 5 is used (common
	// practice, no source: the iteration converges in a few steps when
	// the measurement is mildly nonlinear over the prior's spread).
	MaxIter int
	// Tol stops the iteration when no component of the iterate moves by
	// more than Tol·max(1, |xᵢ|). If zero, 1e-9 is used (common practice,
	// no source).
	Tol float64
	// Step is the relative central-difference step of the Jacobians when
	// the model has none, as in EKFConfig. If zero, 1e-6 is used.
	Step float64
	// Jitter and JitterMax configure the jitter repair of a failed
	// Cholesky factorization of S, as in UKFConfig. Default 0: off.
	Jitter, JitterMax float64
}

// Defaults used when IEKFConfig fields are zero.
const (
	DefaultIEKFMaxIter = 5
	DefaultIEKFTol     = 1e-9
)

// IEKF is the iterated extended Kalman filter, whose measurement update is
// the Gauss-Newton method for the maximum a posteriori estimate (Bell &
// Cathey 1993, "The iterated Kalman filter update as a Gauss-Newton
// method", IEEE TAC 38(2)): from the prediction x̄, P̄ and x₀ = x̄ it
// iterates
//
//	Cᵢ = H'(xᵢ),  Kᵢ = P̄ Cᵢᵀ (Cᵢ P̄ Cᵢᵀ + R)⁻¹,
//	xᵢ₊₁ = x̄ + Kᵢ (z − H(xᵢ) − Cᵢ (x̄ − xᵢ)),
//
// a Gauss-Newton step on ½|z − H(x)|²_R⁻¹ + ½|x − x̄|²_P̄⁻¹, until no
// component moves by more than Tol·max(1, |xᵢ|) or MaxIter iterations are
// done, and takes the covariance in Joseph form (I−KC) P̄ (I−KC)ᵀ + K R Kᵀ
// with the gain and Jacobian of the last iteration. Parameters: MaxIter
// (default 5), Tol (default 1e-9), Step (default 1e-6), Jitter (off).
//
// The prediction is the EKF's. Jacobians are the model's HJac and FJac, or
// central differences (as in EKF) about each iterate. Innovations of
// Model.AngleMeas components are wrapped, and so are differences of
// Model.AngleState components and the estimate's angles.
//
// The innovation it reports (Innovator) is that of the prediction,
// ν = z − H(x̄) with S = C₀ P̄ C₀ᵀ + R, the quantity NIS is defined on; the
// first iteration is the EKF update, so MaxIter 1 gives the EKF. On a
// linear model the first iterate is the minimum and the IEKF is the Kalman
// filter. It needs additive noise (NewIEKF refuses a model with FW or HV).
// It implements Filter, Innovator and Repairer.
type IEKF struct {
	c       linCore
	maxIter int
	tol     float64
	iters   int // iterations of the last update with a measurement

	// workspace, sized at set-up
	xbar []float64 // the prediction x̄ (nx)
	xi   []float64 // the current iterate (nx)
	dx   []float64 // xᵢ − x̄, angles wrapped (nx)
	r    []float64 // z − H(xᵢ) + Cᵢ (xᵢ − x̄) (nz)
	nu0  []float64 // innovation of the prediction (nz)
	s0   []float64 // its covariance (nz*nz)
}

// NewIEKF returns an iterated extended Kalman filter for m.
func NewIEKF(m *Model, cfg IEKFConfig) (*IEKF, error) {
	m.check()
	if m.Manifold != nil {
		return nil, ErrManifold
	}
	checkAngles(m)
	maxIter, tol, step := cfg.MaxIter, cfg.Tol, cfg.Step
	if maxIter == 0 {
		maxIter = DefaultIEKFMaxIter
	}
	if tol == 0 {
		tol = DefaultIEKFTol
	}
	if step == 0 {
		step = DefaultEKFStep
	}
	if maxIter < 1 || !(tol > 0) || math.IsInf(tol, 0) || !(step > 0) {
		return nil, errors.New("filters: iekf: MaxIter must be at least 1, Tol and Step positive")
	}
	if !m.Additive() {
		return nil, errors.New("filters: iekf needs additive noise (the model has FW or HV)")
	}
	jit, err := newJitter("iekf", cfg.Jitter, cfg.JitterMax)
	if err != nil {
		return nil, err
	}
	nx, nz := m.Nx, m.Nz
	f := &IEKF{maxIter: maxIter, tol: tol,
		xbar: make([]float64, nx), xi: make([]float64, nx), dx: make([]float64, nx),
		r: make([]float64, nz), nu0: make([]float64, nz), s0: make([]float64, nz*nz)}
	f.c.init(m)
	f.c.step = step
	f.c.wrapState = true
	f.c.jit = jit
	return f, nil
}

// Reset implements Filter. rng is not used.
func (f *IEKF) Reset(x0, p0 []float64, rng *rand.Rand) error {
	f.iters = 0
	return f.c.reset(x0, p0)
}

// Predict implements Filter.
func (f *IEKF) Predict(k int) error { return f.c.predict(k) }

// Update implements Filter.
func (f *IEKF) Update(z []float64, k int) error {
	c := &f.c
	c.hasInnov = false
	if z == nil {
		return nil
	}
	nx, nz := c.nx, c.nz
	if len(z) != nz {
		panic("filters: dimension mismatch")
	}
	m := c.m
	copy(f.xbar, c.x)
	copy(f.xi, c.x)
	rk := m.rAt(c.rbuf, k)
	f.iters = 0
	for it := 0; it < f.maxIter; it++ {
		f.iters++
		m.H(c.zhat, f.xi, k) // linearise at the iterate
		if m.HJac != nil {
			m.HJac(c.cj, f.xi, k)
		} else {
			c.diffJac(c.cj, m.H, nz, m.AngleMeas, f.xi, k)
		}
		for i := range f.r {
			f.r[i] = z[i] - c.zhat[i]
		}
		for _, i := range m.AngleMeas {
			f.r[i] = wrapAngle(f.r[i])
		}
		if !c.gain(rk) { // P̄ is c.p throughout
			return ErrNotPosDef
		}
		if it == 0 {
			copy(f.nu0, f.r)
			copy(f.s0, c.s)
		}
		// r += Cᵢ (xᵢ − x̄); xᵢ₊₁ = x̄ + K r.
		for i := range f.dx {
			f.dx[i] = f.xi[i] - f.xbar[i]
		}
		for _, i := range m.AngleState {
			f.dx[i] = wrapAngle(f.dx[i])
		}
		mulVecAdd(f.r, c.cj, f.dx, nz, nx)
		moved := false
		for i := 0; i < nx; i++ {
			ki := c.k[i*nz : i*nz+nz]
			var d float64
			for j, kv := range ki {
				d += kv * f.r[j]
			}
			xn := f.xbar[i] + d
			if math.Abs(xn-f.xi[i]) > f.tol*max(1, math.Abs(f.xi[i])) {
				moved = true
			}
			f.xi[i] = xn
		}
		for _, i := range m.AngleState {
			f.xi[i] = wrapAngle(f.xi[i])
		}
		if !moved || !allFinite(f.xi) {
			break
		}
	}
	copy(c.x, f.xi)
	c.joseph(rk)
	copy(c.nu, f.nu0)
	copy(c.s, f.s0)
	if !allFinite(c.x) || !allFinite(c.p) {
		return ErrNonFinite
	}
	c.hasInnov = true
	return nil
}

// mulVecAdd sets dst (m) += a (m x n) * x (n).
func mulVecAdd(dst, a, x []float64, m, n int) {
	for i := 0; i < m; i++ {
		ai := a[i*n : i*n+n]
		var s float64
		for j, av := range ai {
			s += av * x[j]
		}
		dst[i] += s
	}
}

// EstimateTo implements Filter.
func (f *IEKF) EstimateTo(x, p []float64) { f.c.estimateTo(x, p) }

// InnovationTo implements Innovator: the innovation of the prediction,
// z − H(x̄), and its covariance. s may be nil. It reports false after
// Predict until an Update with a measurement succeeds.
func (f *IEKF) InnovationTo(nu, s []float64) bool { return f.c.innovationTo(nu, s) }

// Repairs implements Repairer: the jitter repairs since Reset.
func (f *IEKF) Repairs() int { return f.c.jit.repairs }

// Iterations returns the number of Gauss-Newton iterations of the last
// update with a measurement.
func (f *IEKF) Iterations() int { return f.iters }
