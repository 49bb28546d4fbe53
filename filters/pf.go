package filters

import (
	"errors"
	"math"
	"math/rand/v2"
)

// PFConfig configures NewPF. The zero value gives the defaults.
type PFConfig struct {
	// Particles is the number of particles N. If zero, 1000 is used.
	Particles int
	// ResampleThreshold sets when to resample: after an update whose
	// effective sample size is below ResampleThreshold*N. It lies in
	// (0, 1]; if zero, 1.0 is used, which resamples after every update
	// whose weights are not all equal.
	ResampleThreshold float64
	// Resample is the resampling scheme; the zero value is systematic.
	Resample Resampling
	// Roughening, if positive, is the constant K of roughening (Gordon,
	// Salmond & Smith 1993, from memory): after each resampling every
	// component c of every particle gets an independent N(0, σ_c²)
	// jitter with σ_c = K·E_c·N^(−1/Nx), E_c the range of component c
	// over the resampled particles (angle components are then wrapped).
	// Zero (the default) turns it off; it must be finite and not negative.
	// It is not supported for a state on a manifold (Model.Manifold).
	Roughening float64
}

// Defaults used when PFConfig fields are zero.
const (
	DefaultPFParticles         = 1000
	DefaultPFResampleThreshold = 1.0
)

// PF is the bootstrap particle filter of Gordon, Salmond & Smith 1993
// ("Novel approach to nonlinear/non-Gaussian Bayesian state estimation",
// IEE Proc. F 140(2)): particles are propagated through the transition with
// sampled process noise (the prior as proposal), weighted by the
// measurement likelihood, and resampled when the effective sample size
// 1/Σw² falls below ResampleThreshold·N, by the scheme of PFConfig.Resample
// (systematic by default: Kitagawa 1996, "Monte Carlo filter and smoother
// for non-Gaussian nonlinear state space models", JCGS 5(1); the others as
// compared by Douc, Cappé & Moulines 2005, "Comparison of resampling
// schemes for particle filtering", ISPA), optionally followed by
// roughening.
//
// Reset draws the N particles from N(x0, p0). p0 may be positive
// semi-definite: a component with zero variance (up to a relative 1e-12 of
// the largest variance) starts exactly at x0; ErrNotPosDef is returned if p0
// is not positive semi-definite. Q is treated the same way (zero-variance
// components get no noise).
//
// # Noise and likelihood
//
// With additive process noise a particle moves to F(x) + w, w ~ N(0, Q);
// if the model has FW, to FW(x, w, k) with w ~ N(0, Q) of dimension Nw.
// The likelihood is Model.MeasLogLik when set (the exact density of
// non-Gaussian measurement noise) and otherwise the Gaussian density of
// z − H(x) with covariance R, which must then be positive definite. A model
// with non-additive measurement noise (HV) must set MeasLogLik, as the
// density of HV(x, v) is not available in general: NewPF refuses it
// otherwise.
//
// Weights are kept as logarithms and normalised by log-sum-exp, so a
// measurement far from every particle leaves the nearest ones, not an
// error. Log-weights are floored at -1e13 (a residual of over 4·10⁶
// standard deviations): a particle whose log-likelihood is below the floor
// or NaN (a NaN measurement function value), or a MeasLogLik above 1e12
// (no density is that large), gets weight zero, and if no particle is
// above the floor Update returns ErrWeightsZero. The estimate is the
// weighted mean and covariance of the particles, taken after the weights of
// an update and before resampling; Model.AngleState components use the
// circular mean atan2(Σw sin, Σw cos) and wrapped residuals. If the
// estimate is not finite Update returns ErrNonFinite. After either error
// the filter must be Reset.
//
// The innovation is nu = z - zhat, with zhat the weighted mean of the
// predicted particle measurements H(x_i) under the weights before the
// update, and S their weighted covariance plus R (NaN if any H(x_i) is).
// With HV the predicted measurements are HV(x_i, v_i) with v_i ~ N(0, R)
// drawn per particle, and S is their weighted covariance (R is then the
// covariance of v, not of the measurement).
//
// # State on a manifold
//
// On a model with a Manifold (pf only: apf and rpf return ErrManifold) the
// noise is drawn in the tangent: Reset draws x0 ⊞ L n with L L' = p0 and n
// standard normal (Dim draws), and Predict moves a particle to F(x) ⊞ w,
// w ~ N(0, Q). The estimate is taken only when EstimateTo asks for it,
// from the weighted particles of the last update (before resampling) or of
// the last prediction: the mean is the weighted Karcher mean, from the
// particle of largest weight by two Gauss–Newton steps
// x ← x ⊞ Σ wᵢ (xᵢ ⊟ x) (Hauberg, Lauze & Pedersen 2013, "Unscented
// Kalman filtering on Riemannian manifolds", J. Math. Imaging and Vision
// 46(1), §3), and the covariance Σ wᵢ dᵢ dᵢᵀ with dᵢ = xᵢ ⊟ mean (Dim*Dim).
// That costs three passes of Minus over the particles. Update then returns
// ErrNonFinite if a particle is not finite, instead of checking the
// estimate.
//
// PF implements Filter, Innovator and ESSer. It calls Model.FMany and
// Model.HMany, when set, once per step for all particles (stored one after
// another), and F and H per particle otherwise (FW and HV always per
// particle). All randomness comes from the stream passed to Reset:
// NormFloat64 for the noise and the roughening, and for each resampling
// one Float64 (systematic), N Float64 (stratified) or up to N+1
// ExpFloat64 (multinomial, residual).
type PF struct {
	m      *Model
	name   string    // "pf" or "rpf", for messages
	mf     *Manifold // Model.Manifold (pf only), nil on a vector space
	n      int       // particles
	thresh float64   // resample when ess < thresh*n
	scalar bool      // Nx == Nz == 1, additive Gaussian noise, no angles: scalar fast paths

	rs    resampler // resampling scheme and its workspace
	rough float64   // roughening constant K, 0 = off
	sig   []float64 // roughening standard deviations, Nx

	// regularisation (rpf): after resampling, jitter h·L e with L L' the
	// weighted particle covariance before resampling.
	regular bool
	hopt    float64
	lk      []float64 // h·L, Nx*Nx
	lkc     []int     // nonzero columns of lk, capacity Nx

	lq    []float64 // PSD lower factor of Q, Nw*Nw (Nw = Nx with additive noise)
	qcols []int     // the nonzero columns of lq (noise draws per particle)
	lr    []float64 // lower Cholesky factor of R (Gaussian likelihood), Nz*Nz
	lv    []float64 // PSD lower factor of R (HV), Nv*Nv
	vcols []int     // the nonzero columns of lv
	sqQ   float64   // sqrt(Q) when scalar
	halfR float64   // -1/(2R) when scalar
	rk    []float64 // R of the current Update: Model.R, or rbuf (Model.RAt)
	rbuf  []float64 // Model.RAt's value, len(R)

	rng *rand.Rand // stream of the current run

	// particle state
	x   []float64 // particles, n*Nx, particle i at x[i*Nx:]
	alt []float64 // second particle buffer (transition output, resampling destination)
	lw  []float64 // log-weights, n, normalised after an update; unused if eq
	w   []float64 // normalised weights, n; unused if eq
	eq  bool      // all weights are 1/n (after Reset and resampling)

	// results
	mean, cov []float64 // estimate, Nx and Nx*Nx
	estOK     bool      // mean and cov describe the current particles
	ess       float64   // ESS at the last update, before resampling
	nu, s     []float64 // innovation of the last update, Nz and Nz*Nz
	haveInnov bool      // nu and s are set
	resamples int       // resampling events since Reset (tests)

	// on a manifold only: the particles and weights (nil: equal) that the
	// estimate describes while estOK is false, and its workspace
	ex, ew []float64
	td     []float64 // one tangent vector (noise draw, mean step), Nd
	xa     []float64 // one state, Nx

	// workspace, sized in NewPF, reused every step
	zh  []float64 // predicted measurements H(x_i), n*Nz
	zm  []float64 // weighted mean of zh, Nz
	r   []float64 // one residual, max(Nx, Nz)
	e   []float64 // one standard normal draw, max(Nx, Nw, Nv)
	nw  []float64 // one process noise draw, Nw (FW)
	nv  []float64 // one measurement noise draw, Nv (HV)
	l0  []float64 // PSD lower factor of p0, Nx*Nx
	p0c []int     // the nonzero columns of l0, capacity Nx
	res []float64 // residuals of the points of a weighted moment, n*max(Nx, Nz)
}

var (
	_ Filter    = (*PF)(nil)
	_ Innovator = (*PF)(nil)
	_ ESSer     = (*PF)(nil)
)

// NewPF returns a bootstrap particle filter for m; Q and R are factored
// here, once. It returns ErrNotPosDef if Q is not positive semi-definite or
// R is not positive definite (positive semi-definite with HV; with
// MeasLogLik and additive noise R only enters S and is not factored), and
// an error if the config is out of range or m has HV without MeasLogLik.
func NewPF(m *Model, cfg PFConfig) (*PF, error) {
	return newPF(m, cfg, "pf")
}

func newPF(m *Model, cfg PFConfig, name string) (*PF, error) {
	m.check()
	if m.Manifold != nil && name != "pf" {
		return nil, ErrManifold
	}
	n := cfg.Particles
	if n == 0 {
		n = DefaultPFParticles
	}
	if n < 1 || n > math.MaxInt32-1 {
		return nil, errors.New("filters: " + name + ": Particles must be in [1, 2^31-2]")
	}
	th := cfg.ResampleThreshold
	if th == 0 {
		th = DefaultPFResampleThreshold
	}
	if !(th > 0 && th <= 1) {
		return nil, errors.New("filters: " + name + ": ResampleThreshold must be in (0, 1]")
	}
	if !cfg.Resample.valid() {
		return nil, errors.New("filters: " + name + ": unknown Resample scheme")
	}
	if !(cfg.Roughening >= 0) || math.IsInf(cfg.Roughening, 0) {
		return nil, errors.New("filters: " + name + ": Roughening must be finite and not negative")
	}
	if m.Manifold != nil && cfg.Roughening != 0 {
		return nil, errors.New("filters: " + name + ": Roughening is not supported for a state on a manifold (Model.Manifold)")
	}
	if m.HV != nil && m.MeasLogLik == nil {
		return nil, errors.New("filters: " + name + ": the model's measurement noise is not additive (HV) and it has no MeasLogLik; the likelihood of HV(x, v) is not available")
	}
	nx, nz, nd := m.Nx, m.Nz, m.Nd()
	nwd, nvd := nd, nz
	if m.FW != nil {
		nwd = m.Nw
	}
	if m.HV != nil {
		nvd = m.Nv
	}
	nm := max(nx, nz)
	f := &PF{
		m:      m,
		name:   name,
		n:      n,
		thresh: th,
		mf:     m.Manifold,
		scalar: nx == 1 && nz == 1 && len(m.AngleState) == 0 && len(m.AngleMeas) == 0 &&
			m.Additive() && m.MeasLogLik == nil && m.Manifold == nil,
		rs:    newResampler(cfg.Resample, n),
		rough: cfg.Roughening,
		sig:   make([]float64, nx),
		lq:    make([]float64, nwd*nwd),
		lr:    make([]float64, nz*nz),
		x:     make([]float64, n*nx),
		alt:   make([]float64, n*nx),
		lw:    make([]float64, n),
		w:     make([]float64, n),
		mean:  make([]float64, nx),
		cov:   make([]float64, nd*nd),
		nu:    make([]float64, nz),
		s:     make([]float64, nz*nz),
		zh:    make([]float64, n*nz),
		zm:    make([]float64, nz),
		r:     make([]float64, nm),
		e:     make([]float64, max(nx, nwd, nvd)),
		nw:    make([]float64, nwd),
		l0:    make([]float64, nd*nd),
		p0c:   make([]int, 0, nd),
		res:   make([]float64, n*nm),
	}
	if f.mf != nil {
		f.td = make([]float64, nd)
		f.xa = make([]float64, nx)
	}
	if !semiChol(f.lq, m.Q, nwd) {
		return nil, ErrNotPosDef
	}
	f.qcols = nonzeroCols(nil, f.lq, nwd)
	if m.HV != nil {
		f.lv = make([]float64, nvd*nvd)
		f.nv = make([]float64, nvd)
		if !semiChol(f.lv, m.R, nvd) {
			return nil, ErrNotPosDef
		}
		f.vcols = nonzeroCols(make([]int, 0, nvd), f.lv, nvd)
	} else if m.MeasLogLik == nil && !cholesky(f.lr, m.R, nz) {
		return nil, ErrNotPosDef
	}
	f.sqQ = f.lq[0]
	f.halfR = -0.5 / m.R[0]
	f.rk = m.R
	f.rbuf = make([]float64, len(m.R))
	return f, nil
}

// noiseAt sets f.rk to the measurement noise covariance of step k and,
// when the model has RAt, factors it as newPF factors R (lv with HV, lr
// for the Gaussian likelihood, and halfR). It reports false if that
// factorization fails.
func (f *PF) noiseAt(k int) bool {
	m := f.m
	if m.RAt == nil {
		return true
	}
	r := m.rAt(f.rbuf, k)
	f.rk = r
	switch {
	case m.HV != nil:
		if !semiChol(f.lv, r, m.Nv) {
			return false
		}
		f.vcols = nonzeroCols(f.vcols[:0], f.lv, m.Nv)
	case m.MeasLogLik == nil:
		if !cholesky(f.lr, r, m.Nz) {
			return false
		}
	}
	f.halfR = -0.5 / r[0]
	return true
}

// Reset draws the particles from N(x0, p0) (x0 ⊞ N(0, p0) on a manifold)
// and sets equal weights.
func (f *PF) Reset(x0, p0 []float64, rng *rand.Rand) error {
	nx, nd := f.m.Nx, f.m.Nd()
	if len(x0) != nx || len(p0) != nd*nd {
		panic("filters: " + f.name + ": dimension mismatch")
	}
	if rng == nil {
		panic("filters: " + f.name + ": Reset needs a random stream")
	}
	f.rng = rng
	f.estOK, f.haveInnov, f.resamples = false, false, 0
	f.ess = float64(f.n)
	if !allFinite(x0) {
		return ErrNonFinite
	}
	if !semiChol(f.l0, p0, nd) {
		return ErrNotPosDef
	}
	f.p0c = nonzeroCols(f.p0c[:0], f.l0, nd)
	f.eq = true
	if f.mf != nil {
		for i := 0; i < f.n; i++ {
			d := f.td
			clear(d)
			f.addNoise(d, f.l0, f.p0c)
			f.mf.Plus(f.x[i*nx:i*nx+nx], x0, d)
		}
		f.ex, f.ew = f.x, nil
		return nil
	}
	for i := 0; i < f.n; i++ {
		xi := f.x[i*nx : i*nx+nx]
		copy(xi, x0)
		f.addNoise(xi, f.l0, f.p0c)
	}
	return nil
}

// addNoise adds l e to v, with l a lower triangular factor (Nx*Nx) whose
// nonzero columns are cols (increasing) and e standard normal: one draw per
// nonzero column, so a rank-deficient factor costs fewer draws.
func (f *PF) addNoise(v, l []float64, cols []int) { addFactorNoise(v, l, cols, f.e, f.rng) }

// addFactorNoise adds l e to v, with l a lower triangular factor
// (len(v) square) whose nonzero columns are cols (increasing) and e drawn
// standard normal into the workspace e (at least len(v) long) from rng.
func addFactorNoise(v, l []float64, cols []int, e []float64, rng *rand.Rand) {
	d := len(v)
	for _, j := range cols {
		e[j] = rng.NormFloat64()
	}
	for i := 0; i < d; i++ {
		li := l[i*d : i*d+i+1]
		var s float64
		for _, j := range cols {
			if j > i {
				break
			}
			s += li[j] * e[j]
		}
		v[i] += s
	}
}

// nonzeroCols appends to dst the indices of the columns of l (n x n) that
// have a nonzero entry.
func nonzeroCols(dst []int, l []float64, n int) []int {
	for j := 0; j < n; j++ {
		for i := j; i < n; i++ {
			if l[i*n+j] != 0 {
				dst = append(dst, j)
				break
			}
		}
	}
	return dst
}

// Predict propagates every particle to step k and adds process noise
// (through FW if the model has it).
func (f *PF) Predict(k int) error {
	f.haveInnov = false
	f.estOK = false
	if f.mf != nil {
		f.propagateManifold(k)
		f.ex, f.ew = f.x, f.weights()
		return nil
	}
	f.propagate(f.alt, f.x, k)
	f.x, f.alt = f.alt, f.x
	return nil
}

// propagateManifold moves every particle to F(x_i) ⊞ w_i, w_i ~ N(0, Q) in
// the tangent: F into alt, then ⊞ back into x (so Plus never aliases).
func (f *PF) propagateManifold(k int) {
	nx := f.m.Nx
	f.m.fAll(f.alt, f.x, k)
	d := f.td
	for i := 0; i < f.n; i++ {
		clear(d)
		f.addNoise(d, f.lq, f.qcols)
		f.mf.Plus(f.x[i*nx:i*nx+nx], f.alt[i*nx:i*nx+nx], d)
	}
}

// propagate sets the particles dst to samples of the transition from the
// particles src (dst must not alias src).
func (f *PF) propagate(dst, src []float64, k int) {
	m := f.m
	nx := m.Nx
	if m.FW != nil {
		w := f.nw
		for i := 0; i < f.n; i++ {
			clear(w)
			f.addNoise(w, f.lq, f.qcols)
			m.FW(dst[i*nx:i*nx+nx], src[i*nx:i*nx+nx], w, k)
		}
		return
	}
	m.fAll(dst, src, k)
	if f.scalar {
		sq, rng := f.sqQ, f.rng
		for i := range dst {
			dst[i] += sq * rng.NormFloat64()
		}
		return
	}
	for i := 0; i < f.n; i++ {
		f.addNoise(dst[i*nx:i*nx+nx], f.lq, f.qcols)
	}
}

// measure sets zh to the predicted measurements of the particles x: H(x_i),
// or HV(x_i, v_i) with v_i ~ N(0, R) if the model has HV.
func (f *PF) measure(x []float64, k int) {
	m := f.m
	nx, nz := m.Nx, m.Nz
	switch {
	case m.HV != nil:
		v := f.nv
		for i := 0; i < f.n; i++ {
			clear(v)
			f.addNoise(v, f.lv, f.vcols)
			m.HV(f.zh[i*nz:i*nz+nz], x[i*nx:i*nx+nx], v, k)
		}
	default:
		m.hAll(f.zh, x, k)
	}
}

// Update weights the particles by the likelihood of z, takes the estimate
// and resamples if the effective sample size is low. z == nil leaves the
// weights unchanged; the estimate is then that of the predicted particles.
func (f *PF) Update(z []float64, k int) error {
	f.haveInnov = false
	if z == nil {
		if f.mf != nil {
			return f.checkParticles()
		}
		f.estimate()
		return f.checkEstimate()
	}
	m := f.m
	nx, nz := m.Nx, m.Nz
	if len(z) != nz {
		panic("filters: " + f.name + ": dimension mismatch")
	}
	if !f.noiseAt(k) {
		return ErrNotPosDef
	}
	f.measure(f.x, k)
	var mx float64
	if f.scalar {
		mx = f.logLikScalar(z[0])
	} else {
		f.innovation(z)
		mx = f.logLik(z, k)
	}
	if !(mx > lwFloor) {
		return ErrWeightsZero
	}

	// Weights exp(lw - mx): the largest is 1, so sum >= 1.
	var sum, sum2, sx float64
	if f.scalar {
		sum, sum2, sx = expShiftDot(f.w, f.lw, f.x, mx)
	} else {
		sum, sum2 = expShift(f.w, f.lw, mx)
	}
	f.eq = false
	f.ess = sum * sum / sum2
	resample := f.ess < f.thresh*float64(f.n)
	inv := 1 / sum
	if f.scalar {
		// Moments from the unnormalised weights: the mean from the
		// exponential pass, the variance in a second pass.
		mean := sx * inv
		var c float64
		w := f.w[:len(f.x)]
		for i, x := range f.x {
			r := x - mean
			c += w[i] * r * r
		}
		f.mean[0], f.cov[0] = mean, c*inv
		f.estOK = true
	} else {
		for i := range f.w {
			f.w[i] *= inv
		}
		inv = 1
		if f.mf != nil {
			f.ex, f.ew = f.x, f.w // kept through resampling: f.x becomes f.alt
		} else {
			f.estimate()
		}
	}
	if f.mf != nil {
		if err := f.checkParticles(); err != nil {
			return err
		}
	} else if err := f.checkEstimate(); err != nil {
		return err
	}

	f.haveInnov = true
	if resample {
		f.rs.resample(f.alt, f.x, f.w, nx, float64(f.n)*inv, f.rng)
		f.x, f.alt = f.alt, f.x
		f.eq = true
		f.resamples++
		if f.rough > 0 {
			roughen(f.x, nx, f.rough, m.AngleState, f.sig, f.rng)
		}
		if f.regular {
			return f.regularise()
		}
		return nil
	}
	// Keep normalised weights and log-weights, so they cannot drift.
	if f.scalar {
		for i := range f.w {
			f.w[i] *= inv
		}
	}
	shift := mx + math.Log(sum)
	for i := range f.lw {
		f.lw[i] -= shift
	}
	return nil
}

// regularise adds h·L e_i, e_i standard normal, to every particle, with
// L Lᵀ the weighted particle covariance before resampling (the estimate,
// f.cov) and h the bandwidth: the post-regularised particle filter of
// Musso, Oudjane & Le Gland 2001 (see RPF). It returns ErrNotPosDef if the
// covariance is not positive semi-definite.
func (f *PF) regularise() error {
	nx := f.m.Nx
	if !semiChol(f.lk, f.cov, nx) {
		return ErrNotPosDef
	}
	for i := range f.lk {
		f.lk[i] *= f.hopt
	}
	f.lkc = nonzeroCols(f.lkc[:0], f.lk, nx)
	for i := 0; i < f.n; i++ {
		f.addNoise(f.x[i*nx:i*nx+nx], f.lk, f.lkc)
	}
	wrapComponents(f.x, nx, f.m.AngleState)
	return nil
}

// logLikScalar adds the log-likelihood -(z-h_i)²/(2R) of each particle to
// its log-weight (or sets it if the weights are equal), floored at
// lwFloor, and returns the largest log-weight. In the same pass it takes the
// innovation from d_i = z - h_i: nu = Σw d, S = Σw d² - nu² + R, which is
// the weighted variance of h_i plus R written about z (it loses relative
// precision only about eps·(1 + nu²/S)).
func (f *PF) logLikScalar(z float64) float64 {
	c := f.halfR
	lw := f.lw
	zh := f.zh[:len(lw)]
	mx := math.Inf(-1)
	var sd, sd2 float64
	if f.eq {
		for i, h := range zh {
			d := z - h
			d2 := d * d
			v := c * d2
			if !(v >= lwFloor) { // also NaN; rare, so well predicted
				v = lwFloor
			}
			lw[i] = v
			if v > mx {
				mx = v
			}
			sd += d
			sd2 += d2
		}
		u := 1 / float64(len(lw))
		sd, sd2 = sd*u, sd2*u
	} else {
		w := f.w[:len(lw)]
		for i, h := range zh {
			d := z - h
			d2 := d * d
			v := lw[i] + c*d2
			if !(v >= lwFloor) {
				v = lwFloor
			}
			lw[i] = v
			if v > mx {
				mx = v
			}
			sd += w[i] * d
			sd2 += w[i] * d2
		}
	}
	f.nu[0] = sd
	f.zm[0] = z - sd
	f.s[0] = max(sd2-sd*sd, 0) + f.rk[0]
	return mx
}

// innovation sets zm, nu and s from the predicted measurements zh under
// the prior weights; R is added to s unless the model has HV (whose zh
// carry the measurement noise).
func (f *PF) innovation(z []float64) {
	m := f.m
	weightedMoments(f.zm, f.s, f.zh, f.weights(), m.Nz, m.AngleMeas, f.res[:len(f.zh)])
	if m.HV == nil {
		for i, rv := range f.rk {
			f.s[i] += rv
		}
	}
	for j := range f.nu {
		f.nu[j] = z[j] - f.zm[j]
	}
	for _, j := range m.AngleMeas {
		f.nu[j] = wrapAngle(f.nu[j])
	}
}

// logLik adds the log-likelihood of z for each particle to its log-weight
// (or sets it if the weights are equal), floored at lwFloor, and returns
// the largest log-weight.
func (f *PF) logLik(z []float64, k int) float64 {
	nx, nz := f.m.Nx, f.m.Nz
	mx := math.Inf(-1)
	for i := range f.lw {
		v := f.pointLogLik(z, f.x[i*nx:i*nx+nx], f.zh[i*nz:i*nz+nz], k)
		if !f.eq {
			v += f.lw[i]
		}
		if !(v >= lwFloor) {
			v = lwFloor
		}
		f.lw[i] = v
		if v > mx {
			mx = v
		}
	}
	return mx
}

// llMax bounds a MeasLogLik value from above: a larger one (or +Inf, or
// NaN) gives the particle weight zero. No density of a measurement in
// physical units is e^(10^12).
const llMax = 1e12

// pointLogLik returns log p(z | x) for the state x with predicted
// measurement zh = H(x): Model.MeasLogLik if set (NaN if it is above
// llMax or NaN), else the Gaussian -|L⁻¹(z-zh)|²/2 with L the Cholesky
// factor of R and angle residuals wrapped (up to a constant).
func (f *PF) pointLogLik(z, x, zh []float64, k int) float64 {
	m := f.m
	if m.MeasLogLik != nil {
		v := m.MeasLogLik(z, x, k)
		if !(v <= llMax) {
			return math.NaN()
		}
		return v
	}
	nz := m.Nz
	r := f.r[:nz]
	for j := range r {
		r[j] = z[j] - zh[j]
	}
	for _, j := range m.AngleMeas {
		r[j] = wrapAngle(r[j])
	}
	forwardSolve(f.lr, r, nz)
	var q float64
	for _, v := range r {
		q += v * v
	}
	return -0.5 * q
}

// checkParticles returns ErrNonFinite if a particle is not finite (on a
// manifold, where the estimate is taken only by EstimateTo).
func (f *PF) checkParticles() error {
	if !allFinite(f.x) {
		return ErrNonFinite
	}
	return nil
}

func (f *PF) checkEstimate() error {
	if !allFinite(f.mean) || !allFinite(f.cov) {
		return ErrNonFinite
	}
	return nil
}

// lwFloor bounds the log-weights from below (NaN is mapped to it too). A
// log-likelihood under it is a residual of over 4·10⁶ standard deviations;
// if no particle is above it, Update returns ErrWeightsZero. Log-weights
// are also at most 0 after each update (they are normalised) and a
// Gaussian log-likelihood is at most 0, so the arguments lw_i - mx of the
// weight exponential lie in [lwFloor, 0] and it needs no clamp. A
// MeasLogLik may be positive, up to llMax, and the auxiliary filter's
// second-stage weights are differences of two log-likelihoods: the
// arguments then lie in [-3e13, 0], where the exponential below is just as
// exact (it gives zero there, and k stays far from overflow).
const lwFloor = -1e13

// The weights exp(lw_i - mx) are computed by an inline exponential for
// arguments x in [lwFloor, 0], with no branch (k below stays far from
// overflow). Results below 2^-500 (about 3e-151; x below about -346.57)
// are zero: relative to the largest weight 1 the mass dropped is below
// float64 resolution for any feasible N, and it keeps every weight and
// squared weight a normal float64 (subnormal arithmetic is slow). The reduction is x = (64e + j)·ln2/64 + r with
// |r| <= ln2/128 and exp(x) = 2^e · 2^(j/64) · p(r), p the degree-5 Taylor
// polynomial of exp (truncation below 4e-17 relative), the table-driven
// method of Tang 1989, "Table-driven implementation of the exponential
// function in IEEE floating-point arithmetic", ACM TOMS 15(2). The loop body
// is repeated in expShift and expShiftDot because the compiler does not
// inline a function of its size.
const (
	expMagic = 0x1.8p52              // adding it rounds to an integer
	expInv   = 64 / math.Ln2         // 64/ln2
	expLn2Hi = 0x1.62e42fefa0000p-7  // ln2/64, high 37 bits (k·hi is exact)
	expLn2Lo = 0x1.cf79abc9e3b3ap-46 // ln2/64 - expLn2Hi
	expECut  = -500                  // 2^e below 2^-500 gives zero
)

// expTab holds 2^(j/64), j = 0..63.
var expTab = func() (t [64]float64) {
	for j := range t {
		t[j] = math.Exp2(float64(j) / 64)
	}
	return t
}()

// expShift sets w[i] = exp(lw[i] - mx) and returns Σw and Σw²; lw[i] - mx
// must lie in [lwFloor, 0].
func expShift(w, lw []float64, mx float64) (sum, sum2 float64) {
	w = w[:len(lw)]
	for i, v := range lw {
		x := v - mx
		t := x*expInv + expMagic
		kd := t - expMagic
		k := int64(math.Float64bits(t)) - int64(math.Float64bits(expMagic))
		r := x - kd*expLn2Hi - kd*expLn2Lo
		r2 := r * r
		p := (1 + r) + r2*((0.5+r*(1.0/6))+r2*(1.0/24+r*(1.0/120)))
		e := k >> 6
		b := uint64(e+1023) << 52
		if e < expECut {
			b = 0
		}
		y := p * expTab[k&63] * math.Float64frombits(b)
		w[i] = y
		sum += y
		sum2 += y * y
	}
	return sum, sum2
}

// expShiftDot is expShift that also returns Σ w[i] x[i].
func expShiftDot(w, lw, xs []float64, mx float64) (sum, sum2, sx float64) {
	w = w[:len(lw)]
	xs = xs[:len(lw)]
	for i, v := range lw {
		x := v - mx
		t := x*expInv + expMagic
		kd := t - expMagic
		k := int64(math.Float64bits(t)) - int64(math.Float64bits(expMagic))
		r := x - kd*expLn2Hi - kd*expLn2Lo
		r2 := r * r
		p := (1 + r) + r2*((0.5+r*(1.0/6))+r2*(1.0/24+r*(1.0/120)))
		e := k >> 6
		b := uint64(e+1023) << 52
		if e < expECut {
			b = 0
		}
		y := p * expTab[k&63] * math.Float64frombits(b)
		w[i] = y
		sum += y
		sum2 += y * y
		sx += y * xs[i]
	}
	return sum, sum2, sx
}

// estimate sets mean and cov to the weighted moments of the particles.
func (f *PF) estimate() {
	weightedMoments(f.mean, f.cov, f.x, f.weights(), f.m.Nx, f.m.AngleState, f.res[:len(f.x)])
	f.estOK = true
}

// manifoldEstimate sets mean and cov to the weighted Karcher mean of the
// particles xs on the manifold and the weighted second moment of their
// deviations xᵢ ⊟ mean (see PF), under the normalised weights w (nil:
// equal). On a vector space with ⊞ = + the first step gives the weighted
// mean up to rounding.
func (f *PF) manifoldEstimate(xs, w []float64) {
	nx, nd, n := f.m.Nx, f.mf.Dim, f.n
	i0 := 0
	if w != nil {
		for i, v := range w {
			if v > w[i0] {
				i0 = i
			}
		}
	}
	mean, res, d := f.mean, f.res[:n*nd], f.td
	copy(mean, xs[i0*nx:i0*nx+nx])
	deviate := func() {
		for i := 0; i < n; i++ {
			f.mf.Minus(res[i*nd:i*nd+nd], xs[i*nx:i*nx+nx], mean)
		}
	}
	for it := 0; it < 2; it++ {
		deviate()
		for j := range d {
			d[j] = wsum1(res[j:], w, nd)
			if w == nil {
				d[j] /= float64(n)
			}
		}
		f.mf.Plus(f.xa, mean, d)
		copy(mean, f.xa)
	}
	deviate()
	for a := 0; a < nd; a++ {
		for b := 0; b <= a; b++ {
			c := wsum2(res[a:], res[b:], w, nd)
			if w == nil {
				c /= float64(n)
			}
			f.cov[a*nd+b], f.cov[b*nd+a] = c, c
		}
	}
	f.estOK = true
}

// weights returns the normalised weights, or nil if they are all equal.
func (f *PF) weights() []float64 {
	if f.eq {
		return nil
	}
	return f.w
}

// EstimateTo copies the weighted particle mean into x and, if p is not nil,
// the weighted particle covariance into p (Nd*Nd; on a manifold both are
// taken here, see PF).
func (f *PF) EstimateTo(x, p []float64) {
	nx, nd := f.m.Nx, f.m.Nd()
	if len(x) != nx || (p != nil && len(p) != nd*nd) {
		panic("filters: " + f.name + ": dimension mismatch")
	}
	if !f.estOK {
		if f.mf != nil {
			f.manifoldEstimate(f.ex, f.ew)
		} else {
			f.estimate()
		}
	}
	copy(x, f.mean)
	if p != nil {
		copy(p, f.cov)
	}
}

// InnovationTo copies the innovation of the last Update and, if s is not
// nil, its covariance. It reports false after Reset or Predict until an
// Update with a measurement succeeds.
func (f *PF) InnovationTo(nu, s []float64) bool {
	nz := f.m.Nz
	if len(nu) != nz || (s != nil && len(s) != nz*nz) {
		panic("filters: " + f.name + ": dimension mismatch")
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

// ESS returns the effective sample size 1/Σw² of the weights at the last
// update, before resampling (N before the first update).
func (f *PF) ESS() float64 { return f.ess }

// weightedMoments sets mean (d) and cov (d*d) to the moments of the
// n = len(v)/d points v (point i at v[i*d:]) under the normalised weights w,
// or equal weights 1/n if w is nil (sums are then divided by n, so equal
// points give their value exactly). The components listed in angles get
// the circular mean atan2(Σw sin, Σw cos) and wrapped residuals. res
// (len(v)) is workspace for the residuals. Each sum runs over the points
// with one accumulator, for the small d of filters.
func weightedMoments(mean, cov, v, w []float64, d int, angles []int, res []float64) {
	n := len(v) / d
	if d == 1 && len(angles) == 0 {
		var m, c float64
		if w == nil {
			for _, x := range v {
				m += x
			}
			m /= float64(n)
			for _, x := range v {
				r := x - m
				c += r * r
			}
			c /= float64(n)
		} else {
			w = w[:len(v)]
			for i, x := range v {
				m += w[i] * x
			}
			for i, x := range v {
				r := x - m
				c += w[i] * r * r
			}
		}
		mean[0], cov[0] = m, c
		return
	}
	for j := 0; j < d; j++ {
		mean[j] = wsum1(v[j:], w, d)
		if w == nil {
			mean[j] /= float64(n)
		}
	}
	for _, j := range angles {
		var sn, cs float64
		for i := 0; i < n; i++ {
			wi := 1.0
			if w != nil {
				wi = w[i]
			}
			s, c := math.Sincos(v[i*d+j])
			sn += wi * s
			cs += wi * c
		}
		mean[j] = math.Atan2(sn, cs) // the 1/n of equal weights cancels
	}
	res = res[:len(v)]
	for i := 0; i < len(v); i += d {
		ri, vi := res[i:i+d], v[i:i+d]
		for j, x := range vi {
			ri[j] = x - mean[j]
		}
	}
	for _, j := range angles {
		for i := j; i < len(res); i += d {
			res[i] = wrapAngle(res[i])
		}
	}
	for a := 0; a < d; a++ {
		for b := 0; b <= a; b++ {
			c := wsum2(res[a:], res[b:], w, d)
			if w == nil {
				c /= float64(n)
			}
			cov[a*d+b], cov[b*d+a] = c, c
		}
	}
}

// wsum1 returns Σ_i w_i x[i*d] over the points i (x starts at the
// component wanted), or the plain sum if w is nil.
func wsum1(x, w []float64, d int) float64 {
	var s float64
	if w == nil {
		for k := 0; k < len(x); k += d {
			s += x[k]
		}
		return s
	}
	for i, k := 0, 0; k < len(x); i, k = i+1, k+d {
		s += w[i] * x[k]
	}
	return s
}

// wsum2 returns Σ_i w_i x[i*d] y[i*d], or the plain sum if w is nil; x is
// the shorter of the two.
func wsum2(x, y, w []float64, d int) float64 {
	var s float64
	y = y[:len(x)]
	if w == nil {
		for k := 0; k < len(x); k += d {
			s += x[k] * y[k]
		}
		return s
	}
	for i, k := 0, 0; k < len(x); i, k = i+1, k+d {
		s += w[i] * x[k] * y[k]
	}
	return s
}

// systematicResample writes into dst the n = len(w) particles (d values
// each) of src selected by systematic resampling with offset u in (0, 1]
// (Kitagawa 1996; Douc, Cappé & Moulines 2005): with weights w summing to
// n/scale and C_i = scale·(w_0+...+w_i), position j+u (j = 0..n-1) selects
// the particle i with C_{i-1} < j+u <= C_i. Particle i thus starts at
// position s_i = floor(C_{i-1}-u+1) (s_0 = 0) and has s_{i+1}-s_i
// offspring, which is floor(n w_i) or ceil(n w_i); the last particle takes
// the positions left by rounding. idx (n+1, all zero) is workspace and is
// left all zero.
//
// It runs without data-dependent branches. As the s_i do not decrease, the
// parent of position j is the number of i >= 1 with s_i <= j: one pass
// counts the starts at each position (idx[n] takes starts at n), and one
// pass sums the counts as it copies the parents.
func systematicResample(dst, src, w []float64, idx []int32, d int, scale, u float64) {
	n := len(w)
	idx = idx[:n+1]
	var c float64
	for i := 1; i < n; i++ {
		c += w[i-1] * scale
		idx[min(int(c-u+1), n)]++
	}
	var p int32
	if d == 1 {
		dst, src = dst[:n], src[:n]
		for j := range dst {
			p += idx[j]
			idx[j] = 0
			dst[j] = src[p]
		}
		idx[n] = 0
		return
	}
	for j := 0; j < n; j++ {
		p += idx[j]
		idx[j] = 0
		copy(dst[j*d:j*d+d], src[int(p)*d:int(p)*d+d])
	}
	idx[n] = 0
}
