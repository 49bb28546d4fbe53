package filters

import (
	"errors"
	"math"
	"math/rand/v2"
)

// KFConfig configures NewKF. It has no fields yet: the zero value is the
// only configuration.
type KFConfig struct{}

// KF is the Kalman filter (Kalman 1960, "A new approach to linear filtering
// and prediction problems") for models with Model.Linear set.
//
// The prediction is x = F(x) (F itself, so affine models with known inputs
// work) and P = A P Aᵀ + Q with A = FJac. The update uses the gain
// K = P Cᵀ S⁻¹, S = C P Cᵀ + R, C = HJac, found by a Cholesky factorization
// of S (never an inverse), and the Joseph form of the covariance update
// P = (I-KC) P (I-KC)ᵀ + K R Kᵀ (Bar-Shalom, Li & Kirubarajan 2001,
// "Estimation with Applications to Tracking and Navigation", §5.2), which
// stays symmetric positive semi-definite under rounding. Innovations of
// Model.AngleMeas components are wrapped to (-π, π].
//
// A and C are evaluated every step (FJac(x, k), HJac(x, k)), so linear
// time-varying models work. If FJac or HJac is nil, the matrix is found by
// central differences of F or H about the origin with unit step, which is
// exact for affine maps up to rounding.
//
// KF has no parameters. It implements Filter and Innovator, and keeps the
// Gaussian log-likelihood of the innovations (LogLikelihood).
type KF struct {
	c linCore
}

// NewKF returns a Kalman filter for m. It fails if m.Linear is false.
func NewKF(m *Model, cfg KFConfig) (*KF, error) {
	m.check()
	if !m.Linear {
		return nil, errors.New("filters: kf needs a linear model (Model.Linear is false)")
	}
	f := &KF{}
	f.c.init(m)
	f.c.atOrigin = true
	f.c.step = 1
	return f, nil
}

// Reset implements Filter. rng is not used.
func (f *KF) Reset(x0, p0 []float64, rng *rand.Rand) error { return f.c.reset(x0, p0) }

// Predict implements Filter.
func (f *KF) Predict(k int) error { return f.c.predict(k) }

// Update implements Filter.
func (f *KF) Update(z []float64, k int) error { return f.c.update(z, k) }

// EstimateTo implements Filter.
func (f *KF) EstimateTo(x, p []float64) { f.c.estimateTo(x, p) }

// InnovationTo implements Innovator. s may be nil. It reports false after
// Predict until an Update with a measurement succeeds.
func (f *KF) InnovationTo(nu, s []float64) bool { return f.c.innovationTo(nu, s) }

// LogLikelihood returns the Gaussian log-likelihood of the innovations of
// all updates with a measurement since Reset,
//
//	−½ Σ_k (log det(2π S_k) + ν_kᵀ S_k⁻¹ ν_k),
//
// the prediction error decomposition of the likelihood of the measurements.
func (f *KF) LogLikelihood() float64 { return f.c.loglik }

// linCore is the linearised Gaussian filter shared by KF and EKF: the same
// prediction and Joseph-form update, differing only in where the Jacobians
// are taken when they must be found by differences.
type linCore struct {
	m      *Model
	nx, nz int

	x []float64 // mean (nx)
	p []float64 // covariance (nx*nx)

	// Jacobian policy for nil FJac/HJac: central differences with step
	// h_i = step*max(1,|x_i|) about x, or, if atOrigin, step about 0.
	step     float64
	atOrigin bool
	// wrapState wraps Model.AngleState components of the mean after each
	// step (EKF); KF leaves the state as the linear model gives it.
	wrapState bool

	hasInnov bool    // the last Update had a measurement and succeeded
	loglik   float64 // accumulated innovation log-likelihood since Reset

	// workspace, sized at set-up, reused every step
	a    []float64 // transition Jacobian A (nx*nx)
	cj   []float64 // measurement Jacobian C (nz*nx)
	fx   []float64 // F(x) (nx)
	ap   []float64 // A P in Predict, (I-KC) P in Update (nx*nx)
	zhat []float64 // predicted measurement H(x) (nz)
	nu   []float64 // innovation z - zhat, angles wrapped (nz)
	s    []float64 // innovation covariance S = C P Cᵀ + R (nz*nz)
	l    []float64 // lower Cholesky factor of S (nz*nz)
	pct  []float64 // cross covariance P Cᵀ (nx*nz)
	k    []float64 // gain K (nx*nz)
	ikc  []float64 // I - K C, then K R Kᵀ (nx*nx)
	kr   []float64 // K R (nx*nz)
	w    []float64 // L⁻¹ ν for the likelihood (nz)
	xt   []float64 // perturbed point for differences (nx)
	dp   []float64 // function value at x + h (max(nx,nz))
	dm   []float64 // function value at x - h (max(nx,nz))
}

func (c *linCore) init(m *Model) {
	nx, nz := m.Nx, m.Nz
	c.m, c.nx, c.nz = m, nx, nz
	c.x = make([]float64, nx)
	c.p = make([]float64, nx*nx)
	c.a = make([]float64, nx*nx)
	c.cj = make([]float64, nz*nx)
	c.fx = make([]float64, nx)
	c.ap = make([]float64, nx*nx)
	c.zhat = make([]float64, nz)
	c.nu = make([]float64, nz)
	c.s = make([]float64, nz*nz)
	c.l = make([]float64, nz*nz)
	c.pct = make([]float64, nx*nz)
	c.k = make([]float64, nx*nz)
	c.ikc = make([]float64, nx*nx)
	c.kr = make([]float64, nx*nz)
	c.w = make([]float64, nz)
	c.xt = make([]float64, nx)
	c.dp = make([]float64, max(nx, nz))
	c.dm = make([]float64, max(nx, nz))
}

func (c *linCore) reset(x0, p0 []float64) error {
	if len(x0) != c.nx || len(p0) != c.nx*c.nx {
		panic("filters: dimension mismatch")
	}
	copy(c.x, x0)
	copy(c.p, p0)
	c.hasInnov = false
	c.loglik = 0
	if !allFinite(c.x) || !allFinite(c.p) {
		return ErrNonFinite
	}
	return nil
}

func (c *linCore) predict(k int) error {
	nx := c.nx
	c.hasInnov = false
	if c.m.FJac != nil {
		c.m.FJac(c.a, c.x, k)
	} else {
		c.diffJac(c.a, c.m.F, nx, c.m.AngleState, k)
	}
	c.m.F(c.fx, c.x, k)
	copy(c.x, c.fx)
	if c.wrapState {
		for _, i := range c.m.AngleState {
			c.x[i] = wrapAngle(c.x[i])
		}
	}
	mul(c.ap, c.a, c.p, nx, nx, nx)
	mulABt(c.p, c.ap, c.a, nx, nx, nx)
	for i, q := range c.m.Q {
		c.p[i] += q
	}
	symmetrize(c.p, nx)
	if !allFinite(c.x) || !allFinite(c.p) {
		return ErrNonFinite
	}
	return nil
}

func (c *linCore) update(z []float64, k int) error {
	c.hasInnov = false
	if z == nil {
		return nil
	}
	nx, nz := c.nx, c.nz
	if len(z) != nz {
		panic("filters: dimension mismatch")
	}
	c.m.H(c.zhat, c.x, k)
	if c.m.HJac != nil {
		c.m.HJac(c.cj, c.x, k)
	} else {
		c.diffJac(c.cj, c.m.H, nz, c.m.AngleMeas, k)
	}
	for i := range c.nu {
		c.nu[i] = z[i] - c.zhat[i]
	}
	for _, i := range c.m.AngleMeas {
		c.nu[i] = wrapAngle(c.nu[i])
	}

	// S = C P Cᵀ + R, K = P Cᵀ S⁻¹ by Cholesky.
	mulABt(c.pct, c.p, c.cj, nx, nx, nz)
	mul(c.s, c.cj, c.pct, nz, nx, nz)
	for i, r := range c.m.R {
		c.s[i] += r
	}
	symmetrize(c.s, nz)
	if !cholesky(c.l, c.s, nz) {
		return ErrNotPosDef
	}
	copy(c.k, c.pct)
	cholSolveRowsT(c.l, c.k, nx, nz)

	// x += K ν
	for i := 0; i < nx; i++ {
		ki := c.k[i*nz : i*nz+nz]
		var d float64
		for j, kv := range ki {
			d += kv * c.nu[j]
		}
		c.x[i] += d
	}
	if c.wrapState {
		for _, i := range c.m.AngleState {
			c.x[i] = wrapAngle(c.x[i])
		}
	}

	// Joseph form: P = (I-KC) P (I-KC)ᵀ + K R Kᵀ.
	mul(c.ikc, c.k, c.cj, nx, nz, nx)
	for i := range c.ikc {
		c.ikc[i] = -c.ikc[i]
	}
	for i := 0; i < nx; i++ {
		c.ikc[i*nx+i] += 1
	}
	mul(c.ap, c.ikc, c.p, nx, nx, nx)
	mulABt(c.p, c.ap, c.ikc, nx, nx, nx)
	mul(c.kr, c.k, c.m.R, nx, nz, nz)
	mulABt(c.ikc, c.kr, c.k, nx, nz, nx)
	for i, v := range c.ikc {
		c.p[i] += v
	}
	symmetrize(c.p, nx)

	// log-likelihood term −½(nz log 2π + log det S + |L⁻¹ν|²)
	copy(c.w, c.nu)
	forwardSolve(c.l, c.w, nz)
	var quad, logdet float64
	for i, v := range c.w {
		quad += v * v
		logdet += 2 * math.Log(c.l[i*nz+i])
	}
	c.loglik -= 0.5 * (float64(nz)*math.Log(2*math.Pi) + logdet + quad)

	if !allFinite(c.x) || !allFinite(c.p) {
		return ErrNonFinite
	}
	c.hasInnov = true
	return nil
}

// diffJac writes the central-difference Jacobian of g (ny outputs) into
// dst (ny*nx, row-major), about c.x with step c.step*max(1,|x_i|), or about
// the origin with step c.step if c.atOrigin. Differences of the output
// components listed in angles are wrapped.
func (c *linCore) diffJac(dst []float64, g func(dst, x []float64, k int), ny int, angles []int, k int) {
	nx := c.nx
	if c.atOrigin {
		for i := range c.xt {
			c.xt[i] = 0
		}
	} else {
		copy(c.xt, c.x)
	}
	dp, dm := c.dp[:ny], c.dm[:ny]
	for j := 0; j < nx; j++ {
		x0 := c.xt[j]
		h := c.step
		if !c.atOrigin {
			h *= max(1, math.Abs(x0))
		}
		xp, xm := x0+h, x0-h
		c.xt[j] = xp
		g(dp, c.xt, k)
		c.xt[j] = xm
		g(dm, c.xt, k)
		c.xt[j] = x0
		for i := range dp {
			dp[i] -= dm[i]
		}
		for _, i := range angles {
			dp[i] = wrapAngle(dp[i])
		}
		inv := 1 / (xp - xm)
		for i, d := range dp {
			dst[i*nx+j] = d * inv
		}
	}
}

func (c *linCore) estimateTo(x, p []float64) {
	if len(x) != c.nx || (p != nil && len(p) != c.nx*c.nx) {
		panic("filters: dimension mismatch")
	}
	copy(x, c.x)
	if p != nil {
		copy(p, c.p)
	}
}

func (c *linCore) innovationTo(nu, s []float64) bool {
	if len(nu) != c.nz || (s != nil && len(s) != c.nz*c.nz) {
		panic("filters: dimension mismatch")
	}
	if !c.hasInnov {
		return false
	}
	copy(nu, c.nu)
	if s != nil {
		copy(s, c.s)
	}
	return true
}
