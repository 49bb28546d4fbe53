package filters

import "errors"

// spCore is the sigma-point Gaussian filter shared by UKF, CKF and GHKF;
// they differ in the point set only. See UKF for the algorithm.
type spCore struct {
	m          *Model
	nx, nz, nd int // nd: covariance dimension (Model.Nd)
	mf         *Manifold

	// Noise augmentation: Predict draws points of [x; w] (dimension nx+nw)
	// and Update of [x; v] (nx+nv) when set. A model with additive noise
	// can be augmented too (forced): its FW is then F(x) + w.
	augW, augV bool
	nw, nv     int

	sp, su sigmaSet // the point sets of Predict and Update
	jit    jitter

	x []float64 // mean (nx)
	p []float64 // covariance (nd*nd)

	hasInnov bool // the last Update had a measurement and succeeded

	// workspace, sized at set-up, reused every step
	lw   []float64 // lower square root of Q, nw x nw, set at Reset (augW)
	lv   []float64 // lower square root of R, nv x nv, set at Reset (augV), and in each Update with Model.RAt
	rbuf []float64 // Model.RAt's value (len(R))
	l    []float64 // Cholesky factor of P (nd*nd)
	la   []float64 // diag(L, lw or lv), na x na (augmented steps only)
	dxT  []float64 // deviations L uᵢ of the points, transposed: na x np
	pts  []float64 // sigma points, np x na (np x nx on a manifold)
	ys   []float64 // propagated points, np x nx
	zs   []float64 // point measurements, np x nz
	dt   []float64 // deviations from a mean, transposed: max(nd,nz) x np
	e    []float64 // dxᵢ − K dzᵢ, transposed: nd x np
	zhat []float64 // predicted measurement (nz)
	nu   []float64 // innovation, angles wrapped (nz)
	s    []float64 // innovation covariance S (nz*nz)
	ls   []float64 // Cholesky factor of S (nz*nz)
	pxz  []float64 // cross covariance Pxz (nd*nz)
	k    []float64 // gain K (nd*nz)
	kr   []float64 // K R (nd*nz)
	krk  []float64 // K R Kᵀ (nd*nd)

	// on a manifold only
	ds   []float64 // tangent deviations of the propagated points, np x nd
	dbar []float64 // their weighted mean (nd)
	xa   []float64 // a state (nx)
}

// setSets is a constructor of the point set for dimension n.
type setMaker func(n int) (sigmaSet, error)

// init sizes the core for m with the sets made by mk; augment forces the
// augmented form for additive noise as well.
func (c *spCore) init(m *Model, mk setMaker, augment bool, jit jitter) error {
	nz := m.Nz
	if m.Manifold != nil && augment {
		return errors.New("Augment is not supported for a state on a manifold (Model.Manifold)")
	}
	// The points live in the covariance's (tangent) space: below, nx is
	// the dimension of the sigma sets, and c.nx that of the stored state.
	nx := m.Nd()
	c.m, c.nx, c.nz, c.nd, c.jit, c.mf = m, m.Nx, nz, nx, jit, m.Manifold
	c.augW = m.FW != nil || augment
	c.augV = m.HV != nil || augment
	np, na := nx, nx
	if c.augW {
		c.nw = nx
		if m.FW != nil {
			c.nw = m.Nw
		}
		na = nx + c.nw
	}
	var err error
	if c.sp, err = mk(na); err != nil {
		return err
	}
	nu := nx
	if c.augV {
		c.nv = nz
		if m.HV != nil {
			c.nv = m.Nv
		}
		nu = nx + c.nv
	}
	if c.su, err = mk(nu); err != nil {
		return err
	}
	na = max(na, nu)
	np = max(c.sp.np, c.su.np)
	rows := max(nx, nz)
	c.sp.reserve(rows)
	c.su.reserve(rows)
	c.x = make([]float64, c.nx)
	c.p = make([]float64, nx*nx)
	c.lw = make([]float64, c.nw*c.nw)
	c.lv = make([]float64, c.nv*c.nv)
	c.rbuf = make([]float64, len(m.R))
	c.l = make([]float64, nx*nx)
	c.la = make([]float64, na*na)
	c.dxT = make([]float64, na*np)
	c.pts = make([]float64, np*max(na, c.nx))
	c.ys = make([]float64, np*c.nx)
	c.zs = make([]float64, np*nz)
	c.dt = make([]float64, rows*np)
	c.e = make([]float64, nx*np)
	c.zhat = make([]float64, nz)
	c.nu = make([]float64, nz)
	c.s = make([]float64, nz*nz)
	c.ls = make([]float64, nz*nz)
	c.pxz = make([]float64, nx*nz)
	c.k = make([]float64, nx*nz)
	c.kr = make([]float64, nx*nz)
	c.krk = make([]float64, nx*nx)
	if c.mf != nil {
		c.ds = make([]float64, np*nx)
		c.dbar = make([]float64, nx)
		c.xa = make([]float64, c.nx)
	}
	return nil
}

func (c *spCore) reset(x0, p0 []float64) error {
	if len(x0) != c.nx || len(p0) != c.nd*c.nd {
		panic("filters: dimension mismatch")
	}
	copy(c.x, x0)
	copy(c.p, p0)
	symmetrize(c.p, c.nd)
	c.hasInnov = false
	c.jit.repairs = 0
	if !allFinite(c.x) || !allFinite(c.p) {
		return ErrNonFinite
	}
	if c.augW && !semiChol(c.lw, c.m.Q, c.nw) {
		return ErrNotPosDef
	}
	if c.augV && !semiChol(c.lv, c.m.R, c.nv) {
		return ErrNotPosDef
	}
	return nil
}

// draw factors P (with the jitter repair, if on) and writes the points of
// set s into c.pts and their deviations into c.dxT; with aug, the state is
// augmented by noise of square root lq (nq x nq).
func (c *spCore) draw(s *sigmaSet, aug bool, lq []float64, nq int) bool {
	nx := c.nd
	if !c.jit.chol(c.l, c.p, nx) {
		return false
	}
	la := c.l
	if aug {
		na := nx + nq
		la = c.la[:na*na]
		for i := range la {
			la[i] = 0
		}
		for r := 0; r < nx; r++ {
			copy(la[r*na:r*na+nx], c.l[r*nx:r*nx+nx])
		}
		for r := 0; r < nq; r++ {
			copy(la[(nx+r)*na+nx:(nx+r)*na+na], lq[r*nq:r*nq+nq])
		}
	}
	s.devTo(c.dxT, la)
	if c.mf != nil {
		c.manifoldPoints(s)
		return true
	}
	s.pointsTo(c.pts, c.x, c.dxT)
	return true
}

// manifoldPoints writes the points x ⊞ dᵢ of the deviations in c.dxT into
// c.pts (np x Nx).
func (c *spCore) manifoldPoints(s *sigmaSet) {
	nx, nd, np := c.nx, c.nd, s.np
	for i := 0; i < np; i++ {
		d := c.dbar[:nd]
		for r := range d {
			d[r] = c.dxT[r*np+i]
		}
		c.mf.Plus(c.pts[i*nx:(i+1)*nx], c.x, d)
	}
}

// manifoldMean sets c.x to the weighted mean of the propagated points
// c.ys (np x Nx) on the manifold and c.dt to their tangent deviations
// about it, transposed (nd x np). The mean starts at the first point (the
// central one for sets that have it) and takes two Gauss–Newton steps
// x ← x ⊞ Σ Wmᵢ (yᵢ ⊟ x) of the weighted Karcher mean (Hauberg, Lauze &
// Pedersen 2013, "Unscented Kalman filtering on Riemannian manifolds",
// J. Math. Imaging and Vision 46(1), §3): on a vector space with
// ⊞ = + the first step gives the ordinary weighted mean exactly.
func (c *spCore) manifoldMean(s *sigmaSet) {
	nx, nd, np := c.nx, c.nd, s.np
	copy(c.x, c.ys[:nx])
	for it := 0; it < 2; it++ {
		for i := 0; i < np; i++ {
			c.mf.Minus(c.ds[i*nd:(i+1)*nd], c.ys[i*nx:(i+1)*nx], c.x)
		}
		s.mean(c.dbar, c.ds, nd, nil)
		c.mf.Plus(c.xa, c.x, c.dbar)
		copy(c.x, c.xa)
	}
	for i := 0; i < np; i++ {
		c.mf.Minus(c.ds[i*nd:(i+1)*nd], c.ys[i*nx:(i+1)*nx], c.x)
	}
	for j := range c.dbar {
		c.dbar[j] = 0
	}
	s.deviate(c.dt, c.ds, c.dbar, nd, nil)
}

func (c *spCore) predict(k int) error {
	nx, nd := c.nx, c.nd
	s := &c.sp
	c.hasInnov = false
	if !c.draw(s, c.augW, c.lw, c.nw) {
		return ErrNotPosDef
	}
	m := c.m
	switch {
	case c.augW:
		na := s.n
		for i := 0; i < s.np; i++ {
			pt, y := c.pts[i*na:i*na+na], c.ys[i*nx:i*nx+nx]
			if m.FW != nil {
				m.FW(y, pt[:nx], pt[nx:], k)
				continue
			}
			m.F(y, pt[:nx], k)
			for j := range y {
				y[j] += pt[nx+j]
			}
		}
	default:
		m.fAll(c.ys[:s.np*nx], c.pts[:s.np*nx], k)
	}
	if c.mf != nil {
		c.manifoldMean(s)
	} else {
		s.mean(c.x, c.ys, nx, m.AngleState)
		s.deviate(c.dt, c.ys, c.x, nx, m.AngleState)
	}
	q := m.Q
	if c.augW {
		q = nil
	}
	if !s.covAdd(c.p, c.dt, q, nd) || !allFinite(c.x) {
		return ErrNonFinite
	}
	return nil
}

func (c *spCore) update(z []float64, k int) error {
	c.hasInnov = false
	if z == nil {
		return nil
	}
	nx, nz, nd := c.nx, c.nz, c.nd
	if len(z) != nz {
		panic("filters: dimension mismatch")
	}
	s := &c.su
	np := s.np
	m := c.m
	r := m.rAt(c.rbuf, k)
	// With a per-step R the augmented square root is that of this step's
	// (R's again when RAt reports none: an earlier step may have replaced it).
	if c.augV && m.RAt != nil && !semiChol(c.lv, r, c.nv) {
		return ErrNotPosDef
	}
	if !c.draw(s, c.augV, c.lv, c.nv) {
		return ErrNotPosDef
	}
	switch {
	case c.augV:
		na := s.n
		for i := 0; i < np; i++ {
			pt, y := c.pts[i*na:i*na+na], c.zs[i*nz:i*nz+nz]
			if m.HV != nil {
				m.HV(y, pt[:nd], pt[nd:], k)
				continue
			}
			m.H(y, pt[:nd], k)
			for j := range y {
				y[j] += pt[nd+j]
			}
		}
	default:
		m.hAll(c.zs[:np*nz], c.pts[:np*nx], k)
	}
	s.mean(c.zhat, c.zs, nz, m.AngleMeas)
	s.deviate(c.dt, c.zs, c.zhat, nz, m.AngleMeas)
	rs := r
	if c.augV {
		rs = nil
	}
	s.covAdd(c.s, c.dt, rs, nz) // a non-finite S fails the factorization
	if !c.jit.chol(c.ls, c.s, nz) {
		return ErrNotPosDef
	}
	// The state rows of the deviations are the first nd rows of dxT.
	s.cross(c.pxz, c.dxT, c.dt, nd, nz)
	copy(c.k, c.pxz)
	cholSolveRowsT(c.ls, c.k, nd, nz)

	for i := range c.nu {
		c.nu[i] = z[i] - c.zhat[i]
	}
	for _, i := range m.AngleMeas {
		c.nu[i] = wrapAngle(c.nu[i])
	}
	for i := 0; i < nd; i++ {
		ki := c.k[i*nz : i*nz+nz]
		var d float64
		for j, kv := range ki {
			d += kv * c.nu[j]
		}
		if c.mf != nil {
			c.dbar[i] = d
			continue
		}
		c.x[i] += d
	}
	if c.mf != nil { // x ⊞ K ν
		c.mf.Plus(c.xa, c.x, c.dbar)
		copy(c.x, c.xa)
	}
	for _, i := range m.AngleState {
		c.x[i] = wrapAngle(c.x[i])
	}

	// Joseph form for sigma points: P = Σ Wcᵢ eᵢ eᵢᵀ + K R Kᵀ with
	// eᵢ = dxᵢ − K dzᵢ (K R Kᵀ is inside the sum when v is augmented).
	dt := c.dt[:nz*np]
	for r := 0; nz == 2 && r < nd; r++ { // the same sums, unrolled
		k0, k1 := c.k[r*2], c.k[r*2+1]
		dx := c.dxT[r*np : r*np+np]
		er := c.e[r*np : r*np+np][:len(dx)]
		dz0, dz1 := dt[:len(dx)], dt[np:][:len(dx)]
		for i, v := range dx {
			er[i] = (v - k0*dz0[i]) - k1*dz1[i]
		}
	}
	for r := 0; nz != 2 && r < nd; r++ {
		kr := c.k[r*nz : r*nz+nz]
		dx := c.dxT[r*np : r*np+np]
		er := c.e[r*np : r*np+np][:len(dx)]
		for i, v := range dx {
			for j, kv := range kr { // (dx − k₀ dz₀) − k₁ dz₁ ..., in a register
				v -= kv * dt[j*np+i]
			}
			er[i] = v
		}
	}
	var krk []float64 // K R Kᵀ, exactly symmetric
	if !c.augV {
		mulDot(c.kr, c.k, r, nd, nz, nz)
		abt(c.krk, c.kr, c.k, nd, nz, nd, true)
		krk = c.krk
	}
	if !s.covAdd(c.p, c.e, krk, nd) || !allFinite(c.x) {
		return ErrNonFinite
	}
	c.hasInnov = true
	return nil
}

func (c *spCore) estimateTo(x, p []float64) { copyEstimate(x, p, c.x, c.p) }

func (c *spCore) innovationTo(nu, s []float64) bool {
	return copyInnovation(nu, s, c.nu, c.s, c.hasInnov)
}
