package datasets

import (
	"math/rand/v2"
)

// flow is the transition of a problem whose motion is an autonomous
// ordinary differential equation dx/dt = f(x): m steps of the classical
// fourth-order Runge–Kutta method of length h per filter step, and the exact
// derivative of that discrete map (the tangent linear model of the scheme,
// not of the ODE), so that an EKF linearises the transition it actually runs.
//
// A flow holds workspace: it is not safe for concurrent use, which is
// enough because the runner gives each worker its own problem. dst may
// alias x in step and jac.
type flow struct {
	n, m int
	h    float64
	f    func(dst, x []float64)    // the vector field
	jmul func(dst, x, a []float64) // dst = Jf(x) a, a and dst n×n; nil: no Jacobian

	// workspace, sized in newFlow
	x, xt, k1, k2, k3, k4 []float64 // n: state, stage point, stage slopes
	id                    []float64 // n×n identity
	a1, a2, a3, a4        []float64 // n×n: derivatives of the stage slopes
	t, s, j, tmp          []float64 // n×n: stage argument, one substep's map, product
}

func newFlow(n, m int, h float64, f func(dst, x []float64), jmul func(dst, x, a []float64)) *flow {
	v := func(k int) []float64 { return make([]float64, k) }
	fl := &flow{n: n, m: m, h: h, f: f, jmul: jmul,
		x: v(n), xt: v(n), k1: v(n), k2: v(n), k3: v(n), k4: v(n)}
	if jmul != nil {
		nn := n * n
		fl.id, fl.a1, fl.a2, fl.a3, fl.a4 = v(nn), v(nn), v(nn), v(nn), v(nn)
		fl.t, fl.s, fl.j, fl.tmp = v(nn), v(nn), v(nn), v(nn)
		for i := 0; i < n; i++ {
			fl.id[i*n+i] = 1
		}
	}
	return fl
}

// step writes the state after one filter step from x into dst.
func (fl *flow) step(dst, x []float64) {
	copy(fl.x, x[:fl.n])
	for range fl.m {
		fl.substep(fl.h)
	}
	copy(dst[:fl.n], fl.x)
}

// substep advances fl.x by one RK4 step of length h, leaving the stage
// points in place for the tangent map: stage i is evaluated at the state
// before the step plus the listed multiple of the previous slope.
func (fl *flow) substep(h float64) {
	x, xt := fl.x, fl.xt
	fl.f(fl.k1, x)
	for i := range xt {
		xt[i] = x[i] + h/2*fl.k1[i]
	}
	fl.f(fl.k2, xt)
	for i := range xt {
		xt[i] = x[i] + h/2*fl.k2[i]
	}
	fl.f(fl.k3, xt)
	for i := range xt {
		xt[i] = x[i] + h*fl.k3[i]
	}
	fl.f(fl.k4, xt)
	for i := range x {
		x[i] += h / 6 * (fl.k1[i] + 2*fl.k2[i] + 2*fl.k3[i] + fl.k4[i])
	}
}

// jac writes the derivative of step at x (n×n, row-major) into dst. With
// stage slopes k1 = f(x), k2 = f(x + h/2 k1), k3 = f(x + h/2 k2),
// k4 = f(x + h k3), their derivatives are A1 = J(x), A2 = J(x2)(I + h/2 A1),
// A3 = J(x3)(I + h/2 A2), A4 = J(x4)(I + h A3), and one substep's map has
// derivative I + h/6 (A1 + 2 A2 + 2 A3 + A4); the step's derivative is the
// product of its substeps' (chain rule).
func (fl *flow) jac(dst, x []float64) {
	n, h := fl.n, fl.h
	nn := n * n
	copy(fl.x, x[:n])
	for sub := range fl.m {
		xs, xt := fl.x, fl.xt
		// stage 1
		fl.f(fl.k1, xs)
		fl.jmul(fl.a1, xs, fl.id)
		// stage 2
		for i := range xt {
			xt[i] = xs[i] + h/2*fl.k1[i]
		}
		fl.f(fl.k2, xt)
		fl.stageArg(fl.a1, h/2)
		fl.jmul(fl.a2, xt, fl.t)
		// stage 3
		for i := range xt {
			xt[i] = xs[i] + h/2*fl.k2[i]
		}
		fl.f(fl.k3, xt)
		fl.stageArg(fl.a2, h/2)
		fl.jmul(fl.a3, xt, fl.t)
		// stage 4
		for i := range xt {
			xt[i] = xs[i] + h*fl.k3[i]
		}
		fl.f(fl.k4, xt)
		fl.stageArg(fl.a3, h)
		fl.jmul(fl.a4, xt, fl.t)
		for i := range xs {
			xs[i] += h / 6 * (fl.k1[i] + 2*fl.k2[i] + 2*fl.k3[i] + fl.k4[i])
		}
		s := fl.s
		for i := 0; i < nn; i++ {
			s[i] = fl.id[i] + h/6*(fl.a1[i]+2*fl.a2[i]+2*fl.a3[i]+fl.a4[i])
		}
		if sub == 0 {
			copy(fl.j, s)
			continue
		}
		matMul(fl.tmp, s, fl.j, n)
		copy(fl.j, fl.tmp)
	}
	copy(dst[:nn], fl.j)
}

// stageArg sets fl.t = I + c a.
func (fl *flow) stageArg(a []float64, c float64) {
	for i, v := range a {
		fl.t[i] = fl.id[i] + c*v
	}
}

// matMul sets dst = a b for n×n row-major matrices; dst must not alias.
func matMul(dst, a, b []float64, n int) {
	for i := 0; i < n; i++ {
		row := dst[i*n : (i+1)*n]
		for j := range row {
			row[j] = 0
		}
		for k := 0; k < n; k++ {
			aik := a[i*n+k]
			if aik == 0 {
				continue
			}
			bk := b[k*n : (k+1)*n]
			for j := range row {
				row[j] += aik * bk[j]
			}
		}
	}
}

// denseJMul returns a jmul for flow from a function writing the dense n×n
// Jacobian of the field, using its own n×n workspace.
func denseJMul(n int, jf func(dst, x []float64)) func(dst, x, a []float64) {
	j := make([]float64, n*n)
	return func(dst, x, a []float64) {
		jf(j, x)
		matMul(dst, j, a, n)
	}
}

// gaussSim is a simulator for additive Gaussian noise whose truth differs
// from what the filters are told: a fixed or separately distributed true
// initial state, or a process noise covariance other than Model.Q.
type gaussSim struct {
	x0         []float64 // mean of the true initial state
	lp, lq, lr []float64 // lower factors of the true prior, process and measurement covariances
	w          []float64 // one noise draw, max(nx, nz)
}

// newGaussSim factors the true covariances; a nil p0 means a fixed x0.
func newGaussSim(x0, p0, q, r []float64, nx, nz int) *gaussSim {
	g := &gaussSim{x0: append([]float64(nil), x0...), w: make([]float64, max(nx, nz))}
	if p0 == nil {
		p0 = make([]float64, nx*nx)
	}
	g.lp, g.lq, g.lr = cholOrZero(p0, nx), cholOrZero(q, nx), cholOrZero(r, nz)
	return g
}

// run fills seq with x0 ~ N(g.x0, P), x_k = F(x_{k-1}, k) + w_k,
// z_k = H(x_k, k) + v_k, wrapping the Model.AngleMeas components of z_k.
func (g *gaussSim) run(p *Problem, seq *Sequence, rng *rand.Rand) {
	m := &p.Model
	nx, nz := m.Nx, m.Nz
	seq.Resize(nx, nz, p.Steps)
	addGaussian(seq.X0, g.x0, g.lp, g.w[:nx], rng)
	prev := seq.X0
	for k := 1; k <= p.Steps; k++ {
		seq.T[k-1] = float64(k) * p.Dt
		x := seq.State(k)
		m.F(x, prev, k)
		addGaussian(x, x, g.lq, g.w[:nx], rng)
		z := seq.Z[(k-1)*nz : k*nz]
		m.H(z, x, k)
		addGaussian(z, z, p.measFactor(g.lr, k), g.w[:nz], rng)
		for _, i := range m.AngleMeas {
			z[i] = wrapPi(z[i])
		}
		seq.Has[k-1] = true
		prev = x
	}
}

// manyStates returns an FMany-style function applying f to each state of
// dimension n stored one after another in x.
func manyStates(n int, f func(dst, x []float64, k int)) func(dst, x []float64, k int) {
	return func(dst, x []float64, k int) {
		for i := 0; i+n <= len(x); i += n {
			f(dst[i:i+n], x[i:i+n], k)
		}
	}
}

// manyMeas returns an HMany-style function applying h (state dimension nx,
// measurement dimension nz) to each state in x.
func manyMeas(nx, nz int, h func(dst, x []float64, k int)) func(dst, x []float64, k int) {
	return func(dst, x []float64, k int) {
		for i, j := 0, 0; i+nx <= len(x); i, j = i+nx, j+nz {
			h(dst[j:j+nz], x[i:i+nx], k)
		}
	}
}
