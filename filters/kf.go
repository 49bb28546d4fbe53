package filters

import (
	"errors"
	"math"
	"math/rand/v2"
)

// KFConfig configures NewKF. The zero value gives the defaults.
type KFConfig struct {
	// Jitter and JitterMax configure the jitter repair of a failed
	// Cholesky factorization of S, as in UKFConfig. Default 0: off.
	Jitter, JitterMax float64
}

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
// central differences of F or H about the origin with unit step (2*Nx
// calls per step), which is exact for affine maps up to rounding.
//
// KF has no parameters besides the optional jitter repair (KFConfig). It
// needs additive noise (NewKF refuses a model with FW or HV). It implements
// Filter, Innovator and Repairer, and keeps the Gaussian log-likelihood of
// the innovations (LogLikelihood).
type KF struct {
	c linCore
}

// NewKF returns a Kalman filter for m. It fails if m.Linear is false.
func NewKF(m *Model, cfg KFConfig) (*KF, error) {
	m.check()
	if m.Manifold != nil {
		return nil, ErrManifold
	}
	checkAngles(m)
	if !m.Linear {
		return nil, errors.New("filters: kf needs a linear model (Model.Linear is false)")
	}
	if !m.Additive() {
		return nil, errors.New("filters: kf needs additive noise (the model has FW or HV)")
	}
	jit, err := newJitter("kf", cfg.Jitter, cfg.JitterMax)
	if err != nil {
		return nil, err
	}
	f := &KF{}
	f.c.init(m)
	f.c.jit = jit
	f.c.atOrigin = true
	f.c.step = 1
	f.c.trackLik = true
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

// Repairs implements Repairer: the jitter repairs since Reset.
func (f *KF) Repairs() int { return f.c.jit.repairs }

// LogLikelihood returns the Gaussian log-likelihood of the innovations of
// all updates with a measurement since Reset,
//
//	−½ Σ_k (log det(2π S_k) + ν_kᵀ S_k⁻¹ ν_k),
//
// the prediction error decomposition of the likelihood of the measurements.
func (f *KF) LogLikelihood() float64 { return f.c.loglik }

// checkAngles panics if m lists an angle component that does not exist.
func checkAngles(m *Model) {
	for _, i := range m.AngleMeas {
		if i < 0 || i >= m.Nz {
			panic("filters: Model.AngleMeas index out of range")
		}
	}
	for _, i := range m.AngleState {
		if i < 0 || i >= m.Nx {
			panic("filters: Model.AngleState index out of range")
		}
	}
}

// linCore is the linearised Gaussian filter shared by KF and EKF: the same
// prediction and Joseph-form update, differing only in where the Jacobians
// are taken when they must be found by differences.
type linCore struct {
	m          *Model
	nx, nz, nd int // nd: covariance dimension (Model.Nd)

	x []float64 // mean (nx)
	p []float64 // covariance (nd*nd)

	// Jacobian policy for nil FJac/HJac: central differences with step
	// h_i = step*max(1,|x_i|) about x, or, if atOrigin, step about 0.
	step     float64
	atOrigin bool
	// wrapState wraps Model.AngleState components of the mean after each
	// step (EKF); KF leaves the state as the linear model gives it.
	wrapState bool

	jit jitter // optional repair of a failed Cholesky factorization of S

	hasInnov bool    // the last Update had a measurement and succeeded
	trackLik bool    // accumulate loglik (KF)
	loglik   float64 // accumulated innovation log-likelihood since Reset

	// workspace, sized at set-up, reused every step
	a    []float64 // transition Jacobian A (nd*nd)
	cj   []float64 // measurement Jacobian C (nz*nd)
	fx   []float64 // F(x) (nx)
	ap   []float64 // A P in Predict, I − K C in Update (nd*nd)
	zhat []float64 // predicted measurement H(x) (nz)
	nu   []float64 // innovation z - zhat, angles wrapped (nz)
	s    []float64 // innovation covariance S = C P Cᵀ + R (nz*nz)
	l    []float64 // lower Cholesky factor of S (nz*nz)
	pct  []float64 // cross covariance P Cᵀ (nd*nz)
	k    []float64 // gain K (nd*nz)
	tmp  []float64 // (I − K C) P, then K R Kᵀ (nd*nd)
	kr   []float64 // K R (nd*nz)
	dx   []float64 // K ν, the tangent correction on a manifold (nd)
	w    []float64 // L⁻¹ ν for the likelihood (nz)
	xt   []float64 // perturbed point for differences (nx)
	dp   []float64 // function value at x + h (max(nx,nz))
	dm   []float64 // function value at x - h (max(nx,nz))
	rbuf []float64 // Model.RAt's value (nz*nz)
}

func (c *linCore) init(m *Model) {
	nx, nz, nd := m.Nx, m.Nz, m.Nd()
	c.m, c.nx, c.nz, c.nd = m, nx, nz, nd
	c.rbuf = make([]float64, len(m.R))
	c.x = make([]float64, nx)
	c.p = make([]float64, nd*nd)
	c.a = make([]float64, nd*nd)
	c.cj = make([]float64, nz*nd)
	c.fx = make([]float64, nx)
	c.ap = make([]float64, nd*nd)
	c.zhat = make([]float64, nz)
	c.nu = make([]float64, nz)
	c.s = make([]float64, nz*nz)
	c.l = make([]float64, nz*nz)
	c.pct = make([]float64, nd*nz)
	c.k = make([]float64, nd*nz)
	c.tmp = make([]float64, nd*nd)
	c.kr = make([]float64, nd*nz)
	c.dx = make([]float64, nd)
	c.w = make([]float64, nz)
	c.xt = make([]float64, nx)
	c.dp = make([]float64, max(nx, nz))
	c.dm = make([]float64, max(nx, nz))
}

func (c *linCore) reset(x0, p0 []float64) error {
	if len(x0) != c.nx || len(p0) != c.nd*c.nd {
		panic("filters: dimension mismatch")
	}
	copy(c.x, x0)
	copy(c.p, p0)
	symmetrize(c.p, c.nd) // the steps rely on an exactly symmetric P
	c.hasInnov = false
	c.loglik = 0
	c.jit.repairs = 0
	if !allFinite(c.x) || !allFinite(c.p) {
		return ErrNonFinite
	}
	return nil
}

func (c *linCore) predict(k int) error {
	nx, nd := c.nx, c.nd
	c.hasInnov = false
	if c.m.FJac != nil {
		c.m.FJac(c.a, c.x, k)
	} else {
		c.diffJac(c.a, c.m.F, nx, c.m.AngleState, c.x, k)
	}
	c.m.F(c.fx, c.x, k)
	copy(c.x, c.fx)
	if c.wrapState {
		for _, i := range c.m.AngleState {
			c.x[i] = wrapAngle(c.x[i])
		}
	}
	// A P = A Pᵀ (P is kept exactly symmetric), then the upper triangle
	// of (A P) Aᵀ, completed with Q and symmetrized in one pass.
	abt(c.ap, c.a, c.p, nd, nd, nd, false)
	abtUpper(c.p, c.ap, c.a, nd, nd, nd, true)
	if !finishSym(c.p, c.m.Q, nd) || !allFinite(c.x) {
		return ErrNonFinite
	}
	return nil
}

func (c *linCore) update(z []float64, k int) error {
	c.hasInnov = false
	if z == nil {
		return nil
	}
	nd, nz := c.nd, c.nz
	if len(z) != nz {
		panic("filters: dimension mismatch")
	}
	c.m.H(c.zhat, c.x, k)
	if c.m.HJac != nil {
		c.m.HJac(c.cj, c.x, k)
	} else {
		c.diffJac(c.cj, c.m.H, nz, c.m.AngleMeas, c.x, k)
	}
	for i := range c.nu {
		c.nu[i] = z[i] - c.zhat[i]
	}
	for _, i := range c.m.AngleMeas {
		c.nu[i] = wrapAngle(c.nu[i])
	}

	r := c.m.rAt(c.rbuf, k)
	if !c.gain(r) {
		return ErrNotPosDef
	}

	// x += K ν, or x = x ⊞ K ν on a manifold
	mf := c.m.Manifold
	for i := 0; i < nd; i++ {
		ki := c.k[i*nz : i*nz+nz]
		var d float64
		for j, kv := range ki {
			d += kv * c.nu[j]
		}
		if mf != nil {
			c.dx[i] = d
			continue
		}
		c.x[i] += d
	}
	if mf != nil {
		mf.Plus(c.fx, c.x, c.dx)
		copy(c.x, c.fx)
	}
	if c.wrapState {
		for _, i := range c.m.AngleState {
			c.x[i] = wrapAngle(c.x[i])
		}
	}
	c.joseph(r)

	if c.trackLik {
		c.addLogLik()
	}
	if !allFinite(c.x) || !allFinite(c.p) {
		return ErrNonFinite
	}
	c.hasInnov = true
	return nil
}

// gain forms S = C P Cᵀ + R for the step's R = r, its Cholesky factor
// (with the jitter repair, if on) and K = P Cᵀ S⁻¹ from c.cj and c.p. It
// reports false if S is not positive definite.
func (c *linCore) gain(r []float64) bool {
	nx, nz := c.nd, c.nz
	abt(c.pct, c.p, c.cj, nx, nx, nz, false)
	mulDot(c.s, c.cj, c.pct, nz, nx, nz)
	s, r := c.s[:nz*nz], r[:nz*nz]
	for i := range s {
		s[i] += r[i]
	}
	symmetrize(s, nz)
	if !c.jit.chol(c.l, c.s, nz) {
		return false
	}
	copy(c.k, c.pct)
	cholSolveRowsT(c.l, c.k, nx, nz)
	return true
}

// joseph replaces P by the Joseph form (I−KC) P (I−KC)ᵀ + K R Kᵀ for the
// gain c.k, Jacobian c.cj and the step's R = r, evaluated as written, as the sum of two
// congruences of positive semi-definite matrices: it stays positive
// semi-definite under rounding for any gain. (The algebraically equal
// P − K C P, or the Joseph form expanded into P − K (P Cᵀ)ᵀ + ..., lose
// that when K C P nearly cancels P, as for a measurement far more precise
// than the prediction.)
func (c *linCore) joseph(r []float64) {
	nx, nz := c.nd, c.nz
	// A = I − K C in ap, in one pass.
	k, cj, a := c.k[:nx*nz], c.cj[:nz*nx], c.ap[:nx*nx]
	for i := 0; nz == 2 && i < nx; i++ { // the same sums, unrolled
		k0, k1 := k[2*i], k[2*i+1]
		row := a[i*nx : i*nx+nx]
		c0, c1 := cj[:len(row)], cj[nx:][:len(row)]
		for j := range row {
			row[j] = -(k0*c0[j] + k1*c1[j])
		}
		row[i] += 1
	}
	for i := 0; nz != 2 && i < nx; i++ {
		ki := k[i*nz : i*nz+nz]
		row := a[i*nx : i*nx+nx]
		for j := range row {
			var s float64 // in a register: a sum through memory waits on every store
			for l, kv := range ki {
				s += kv * cj[l*nx+j]
			}
			row[j] = -s
		}
		row[i] += 1
	}
	abt(c.tmp, a, c.p, nx, nx, nx, false) // A P (P symmetric)
	mulDot(c.kr, k, r, nx, nz, nz)        // K R
	// Upper triangle of (A P) Aᵀ + (K R) Kᵀ, mirrored.
	p, kr := c.p[:nx*nx], c.kr[:nx*nz]
	abtUpper(p, c.tmp, a, nx, nx, nx, true)
	for i := 0; nz == 2 && i < nx; i++ { // the same sums, unrolled
		kr0, kr1 := kr[2*i], kr[2*i+1]
		row := p[i*nx : i*nx+nx]
		for j := i; j < len(row); j++ {
			kj := k[2*j:][:2]
			row[j] += kr0*kj[0] + kr1*kj[1]
		}
	}
	for i := 0; nz != 2 && i < nx; i++ {
		kri := kr[i*nz : i*nz+nz]
		row := p[i*nx : i*nx+nx]
		for j := i; j < nx; j++ {
			kj := k[j*nz : j*nz+len(kri)]
			var s2 float64
			for l, v := range kri {
				s2 += v * kj[l]
			}
			row[j] += s2
		}
	}
	mirrorUpper(p, nx)
}

// addLogLik adds the log-likelihood term −½(nz log 2π + log det S + |L⁻¹ν|²)
// of the current innovation.
func (c *linCore) addLogLik() {
	nz := c.nz
	copy(c.w, c.nu)
	forwardSolve(c.l, c.w, nz)
	var quad, logdet float64
	for i, v := range c.w {
		quad += v * v
		logdet += 2 * math.Log(c.l[i*nz+i])
	}
	c.loglik -= 0.5 * (float64(nz)*math.Log(2*math.Pi) + logdet + quad)
}

// abt sets dst (m x n) = a bᵀ for a (m x k) and b (n x k): every entry is
// a dot product of two rows. If sym (m == n), only the upper triangle is
// computed and then mirrored: for products known to be symmetric, or when
// the caller reads only the upper triangle. Several entries are summed
// at a time with independent sums, so the additions do not wait on one
// another (see abtUpper); this is where the small filters spend their
// time. dst must not alias a or b.
func abt(dst, a, b []float64, m, k, n int, sym bool) {
	abtUpper(dst, a, b, m, k, n, sym)
	if sym {
		mirrorUpper(dst, n)
	}
}

// mirrorUpper copies the upper triangle of a (n x n) into the lower.
func mirrorUpper(a []float64, n int) {
	a = a[:n*n]
	for i := 0; i < n; i++ {
		row := a[i*n : i*n+n]
		for j := i + 1; j < n; j++ {
			a[j*n+i] = row[j]
		}
	}
}

// abtUpper is abt without the mirroring: with sym only the upper triangle
// (diagonal included) of dst is written. Rows of a are taken two at a time
// and columns four at a time, eight independent sums that share their
// loads; each entry is still the plain dot product summed in order.
func abtUpper(dst, a, b []float64, m, k, n int, sym bool) {
	switch k {
	case 3:
		abtK3(dst, a, b, m, n, sym)
		return
	case 4:
		abtK4(dst, a, b, m, n, sym)
		return
	case 5:
		abtK5(dst, a, b, m, n, sym)
		return
	case 6:
		abtK6(dst, a, b, m, n, sym)
		return
	}
	b = b[:n*k]
	if k == 2 { // (K R) Kᵀ and the like: no inner loop
		a = a[:m*2]
		for i := 0; i < m; i++ {
			a0, a1 := a[2*i], a[2*i+1]
			row := dst[i*n : i*n+n]
			j := 0
			if sym {
				j = i
			}
			for ; j < len(row); j++ {
				bj := b[2*j:][:2]
				row[j] = a0*bj[0] + a1*bj[1]
			}
		}
		return
	}
	i := 0
	for ; i+2 <= m; i += 2 {
		a0 := a[i*k : i*k+k]
		a1 := a[(i+1)*k:][:len(a0)] // [:len(a0)] lets the compiler drop bounds checks
		r0 := dst[i*n : i*n+n]
		r1 := dst[(i+1)*n:][:len(r0)]
		j := 0
		if sym { // entry (i, i) alone; both rows then start at i+1
			bj := b[i*k:][:len(a0)]
			var s float64
			for l, av := range a0 {
				s += av * bj[l]
			}
			r0[i] = s
			j = i + 1
		}
		for ; j+4 <= n; j += 4 {
			b0 := b[j*k:][:len(a0)]
			b1 := b[(j+1)*k:][:len(a0)]
			b2 := b[(j+2)*k:][:len(a0)]
			b3 := b[(j+3)*k:][:len(a0)]
			var s0, s1, s2, s3, t0, t1, t2, t3 float64
			for l, av := range a0 {
				aw := a1[l]
				x0, x1, x2, x3 := b0[l], b1[l], b2[l], b3[l]
				s0 += av * x0
				s1 += av * x1
				s2 += av * x2
				s3 += av * x3
				t0 += aw * x0
				t1 += aw * x1
				t2 += aw * x2
				t3 += aw * x3
			}
			r0[j], r0[j+1], r0[j+2], r0[j+3] = s0, s1, s2, s3
			r1[j], r1[j+1], r1[j+2], r1[j+3] = t0, t1, t2, t3
		}
		for ; j < n; j++ {
			bj := b[j*k:][:len(a0)]
			var s, t float64
			for l, av := range a0 {
				x := bj[l]
				s += av * x
				t += a1[l] * x
			}
			r0[j], r1[j] = s, t
		}
	}
	for ; i < m; i++ {
		ai := a[i*k : i*k+k]
		row := dst[i*n : i*n+n]
		j := 0
		if sym {
			j = i
		}
		for ; j+4 <= n; j += 4 {
			b0 := b[j*k:][:len(ai)]
			b1 := b[(j+1)*k:][:len(ai)]
			b2 := b[(j+2)*k:][:len(ai)]
			b3 := b[(j+3)*k:][:len(ai)]
			var s0, s1, s2, s3 float64
			for l, av := range ai {
				s0 += av * b0[l]
				s1 += av * b1[l]
				s2 += av * b2[l]
				s3 += av * b3[l]
			}
			row[j], row[j+1], row[j+2], row[j+3] = s0, s1, s2, s3
		}
		for ; j < n; j++ {
			bj := b[j*k:][:len(ai)]
			var s float64
			for l, av := range ai {
				s += av * bj[l]
			}
			row[j] = s
		}
	}
}

// diffJac writes the central-difference Jacobian of g (ny outputs) into
// dst (ny*nx, row-major), about at with step c.step*max(1,|x_i|), or about
// the origin with step c.step if c.atOrigin. Differences of the output
// components listed in angles are wrapped. at must not be c.xt.
func (c *linCore) diffJac(dst []float64, g func(dst, x []float64, k int), ny int, angles []int, at []float64, k int) {
	nx := c.nx
	if c.atOrigin {
		for i := range c.xt {
			c.xt[i] = 0
		}
	} else {
		copy(c.xt, at)
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

func (c *linCore) estimateTo(x, p []float64) { copyEstimate(x, p, c.x, c.p) }

func (c *linCore) innovationTo(nu, s []float64) bool {
	return copyInnovation(nu, s, c.nu, c.s, c.hasInnov)
}

// copyEstimate copies a filter's mean cx and covariance cp into the
// caller's x and p (p may be nil), checking the sizes.
func copyEstimate(x, p, cx, cp []float64) {
	if len(x) != len(cx) || (p != nil && len(p) != len(cp)) {
		panic("filters: dimension mismatch")
	}
	copy(x, cx)
	if p != nil {
		copy(p, cp)
	}
}

// copyInnovation copies the last innovation cnu and its covariance cs into
// nu and s (s may be nil) and reports has, the filter's "there was one".
func copyInnovation(nu, s, cnu, cs []float64, has bool) bool {
	if len(nu) != len(cnu) || (s != nil && len(s) != len(cs)) {
		panic("filters: dimension mismatch")
	}
	if !has {
		return false
	}
	copy(nu, cnu)
	if s != nil {
		copy(s, cs)
	}
	return true
}
