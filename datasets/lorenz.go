package datasets

import (
	"fmt"
	"math"

	"github.com/estbench/estbench/filters"
)

// Lorenz63Config configures NewLorenz63. Its zero value gives the defaults.
type Lorenz63Config struct {
	Sigma, Rho, Beta float64 // parameters σ, ρ, β; if zero, 10, 28 and 8/3 are used
	Dt               float64 // time between measurements; if zero, 0.05 is used
	RKStep           float64 // Runge–Kutta step, dividing Dt; if zero, 0.01 is used
	Q                float64 // process noise variance per step, each component; if zero, 0.01 is used
	R                float64 // measurement noise variance, each observed component; if zero, 2 is used
	// Observe lists the observed components: "x" (the default if empty),
	// "xz" or "xyz".
	Observe string
	Steps   int // number of steps; if zero, 200 are used
}

func (c Lorenz63Config) withDefaults() (Lorenz63Config, []int, error) {
	if c.Sigma == 0 {
		c.Sigma = 10
	}
	if c.Rho == 0 {
		c.Rho = 28
	}
	if c.Beta == 0 {
		c.Beta = 8.0 / 3
	}
	if c.Dt == 0 {
		c.Dt = 0.05
	}
	if c.RKStep == 0 {
		c.RKStep = 0.01
	}
	if c.Q == 0 {
		c.Q = 0.01
	}
	if c.R == 0 {
		c.R = 2
	}
	if c.Observe == "" {
		c.Observe = "x"
	}
	if c.Steps == 0 {
		c.Steps = 200
	}
	var obs []int
	switch c.Observe {
	case "x":
		obs = []int{0}
	case "xz":
		obs = []int{0, 2}
	case "xyz":
		obs = []int{0, 1, 2}
	default:
		return c, nil, fmt.Errorf(`datasets: lorenz63: Observe must be "x", "xz" or "xyz", got %q`, c.Observe)
	}
	switch {
	case !positive(c.Sigma) || !positive(c.Rho) || !positive(c.Beta):
		return c, nil, fmt.Errorf("datasets: lorenz63: Sigma, Rho and Beta must be positive and finite, got %v, %v, %v", c.Sigma, c.Rho, c.Beta)
	case !positive(c.Dt) || !positive(c.RKStep):
		return c, nil, fmt.Errorf("datasets: lorenz63: Dt and RKStep must be positive and finite, got %v, %v", c.Dt, c.RKStep)
	case substeps(c.Dt, c.RKStep) == 0:
		return c, nil, fmt.Errorf("datasets: lorenz63: Dt (%v) must be a whole multiple of RKStep (%v), at most 1e6 times", c.Dt, c.RKStep)
	case !positive(c.Q):
		return c, nil, fmt.Errorf("datasets: lorenz63: Q must be a positive finite variance, got %v", c.Q)
	case !positive(c.R):
		return c, nil, fmt.Errorf("datasets: lorenz63: R must be a positive finite variance, got %v", c.R)
	case c.Steps < 1:
		return c, nil, fmt.Errorf("datasets: lorenz63: Steps must be at least 1, got %d", c.Steps)
	}
	return c, obs, nil
}

// substeps returns dt/h when it is a whole number up to 1e6 (within a
// relative 1e-9), else 0.
func substeps(dt, h float64) int {
	m := dt / h
	n := int(m + 0.5)
	if n < 1 || n > 1_000_000 || math.Abs(m-float64(n)) > 1e-9*m {
		return 0
	}
	return n
}

// lorenz63Field returns the Lorenz 1963 vector field and its Jacobian.
func lorenz63Field(s, r, b float64) (f func(dst, x []float64), jf func(dst, x []float64)) {
	f = func(dst, x []float64) {
		dst[0], dst[1], dst[2] = s*(x[1]-x[0]), x[0]*(r-x[2])-x[1], x[0]*x[1]-b*x[2]
	}
	jf = func(dst, x []float64) {
		dst[0], dst[1], dst[2] = -s, s, 0
		dst[3], dst[4], dst[5] = r-x[2], -1, -x[0]
		dst[6], dst[7], dst[8] = x[1], x[0], -b
	}
	return f, jf
}

// NewLorenz63 returns the problem "lorenz63": the three-variable
// convection model of Lorenz 1963, "Deterministic nonperiodic flow",
// J. Atmospheric Sciences 20(2),
//
//	dx/dt = σ (y - x),  dy/dt = x (ρ - z) - y,  dz/dt = x y - β z,
//
// with the classic σ = 10, ρ = 28, β = 8/3, on whose chaotic attractor
// small errors grow by a factor e about every 1.1 time units. It is a
// standard test of data assimilation in strongly nonlinear dynamics (Miller,
// Ghil & Gauthiez 1994, "Advanced data assimilation in strongly nonlinear
// dynamical systems", J. Atmospheric Sciences 51(8); Evensen 1997,
// "Advanced data assimilation for strongly nonlinear dynamics", Monthly
// Weather Review 125(6)).
//
// One step is Dt = 0.05 time units, integrated by classical fourth-order
// Runge–Kutta steps of RKStep = 0.01; process noise N(0, q I), q = 0.01, is
// added once per step. The measurement is the observed components
// (cfg.Observe: x only by default; x and z; or all three) plus
// N(0, r I), r = 2 (the observation error variance of Miller et al. 1994, as
// recalled from memory). The Jacobian is the exact derivative of the
// Runge–Kutta map.
//
// The prior mean X0 is a point on the attractor: the state reached from
// (1, 1, 1) after 20 time units of the noise-free model with step RKStep. The
// prior covariance is I, and 200 steps (10 time units) are run. Dt, RKStep, q,
// the prior and the run length are our choice.
//
// Traits: not linear, differentiable, analytic Jacobians, additive
// Gaussian noise. Scored components: x, y, z (indices 0, 1, 2).
func NewLorenz63(cfg Lorenz63Config) (*Problem, error) {
	c, obs, err := cfg.withDefaults()
	if err != nil {
		return nil, err
	}
	const nx = 3
	nz := len(obs)
	field, jf := lorenz63Field(c.Sigma, c.Rho, c.Beta)
	m := substeps(c.Dt, c.RKStep)
	h := c.Dt / float64(m)
	fl := newFlow(nx, m, h, field, denseJMul(nx, jf))
	f := func(dst, x []float64, _ int) { fl.step(dst, x) }

	// Spin-up onto the attractor, with the same Runge–Kutta step.
	spin := newFlow(nx, 1, h, field, nil)
	x0 := []float64{1, 1, 1}
	for range int(20/h + 0.5) {
		spin.step(x0, x0)
	}

	hm, hj := selectComponents(nx, obs)
	p := &Problem{
		Name: "lorenz63",
		Model: filters.Model{
			Nx: nx, Nz: nz,
			F:     f,
			H:     hm,
			FJac:  func(dst, x []float64, _ int) { fl.jac(dst, x) },
			HJac:  hj,
			FMany: manyStates(nx, f),
			HMany: manyMeas(nx, nz, hm),
			Q:     diag(c.Q, c.Q, c.Q),
			R:     scaledIdentity(nz, c.R),
		},
		X0:     x0,
		P0:     diag(1, 1, 1),
		Steps:  c.Steps,
		Dt:     c.Dt,
		Scored: []int{0, 1, 2},
		Traits: Traits{
			Differentiable:    true,
			AnalyticJacobians: true,
			AdditiveNoise:     true,
			GaussianNoise:     true,
		},
	}
	return p, nil
}

// selectComponents returns the measurement that picks the listed state
// components, and its (constant) Jacobian.
func selectComponents(nx int, obs []int) (h, hj func(dst, x []float64, k int)) {
	idx := append([]int(nil), obs...)
	nz := len(idx)
	c := make([]float64, nz*nx)
	for i, j := range idx {
		c[i*nx+j] = 1
	}
	h = func(dst, x []float64, _ int) {
		for i, j := range idx {
			dst[i] = x[j]
		}
	}
	hj = func(dst, _ []float64, _ int) { copy(dst[:nz*nx], c) }
	return h, hj
}

// scaledIdentity returns v I (n×n).
func scaledIdentity(n int, v float64) []float64 {
	m := make([]float64, n*n)
	for i := 0; i < n; i++ {
		m[i*n+i] = v
	}
	return m
}

// Lorenz96Config configures NewLorenz96. Its zero value gives the defaults.
type Lorenz96Config struct {
	N     int     // number of variables, at least 4; if zero, 40 are used
	F     float64 // forcing; if zero, 8 is used
	Dt    float64 // time between measurements, one Runge–Kutta step; if zero, 0.05 is used
	Q     float64 // process noise variance per step, each variable; if zero, 0.01 is used
	R     float64 // measurement noise variance, each observed variable; if zero, 1 is used
	Steps int     // number of steps; if zero, 200 are used
}

func (c Lorenz96Config) withDefaults() (Lorenz96Config, error) {
	if c.N == 0 {
		c.N = 40
	}
	if c.F == 0 {
		c.F = 8
	}
	if c.Dt == 0 {
		c.Dt = 0.05
	}
	if c.Q == 0 {
		c.Q = 0.01
	}
	if c.R == 0 {
		c.R = 1
	}
	if c.Steps == 0 {
		c.Steps = 200
	}
	switch {
	case c.N < 4 || c.N > 10000:
		return c, fmt.Errorf("datasets: lorenz96: N must be in [4, 10000], got %d", c.N)
	case c.F != c.F || c.F > 1e6 || c.F < -1e6:
		return c, fmt.Errorf("datasets: lorenz96: F must be a finite number up to 1e6 in size, got %v", c.F)
	case !positive(c.Dt):
		return c, fmt.Errorf("datasets: lorenz96: Dt must be positive and finite, got %v", c.Dt)
	case !positive(c.Q):
		return c, fmt.Errorf("datasets: lorenz96: Q must be a positive finite variance, got %v", c.Q)
	case !positive(c.R):
		return c, fmt.Errorf("datasets: lorenz96: R must be a positive finite variance, got %v", c.R)
	case c.Steps < 1:
		return c, fmt.Errorf("datasets: lorenz96: Steps must be at least 1, got %d", c.Steps)
	}
	return c, nil
}

// lorenz96Field returns the Lorenz 1996 vector field for n variables with
// forcing F, and the product of its Jacobian with an n×n matrix (each row
// of the Jacobian has four nonzero entries).
func lorenz96Field(n int, force float64) (f func(dst, x []float64), jmul func(dst, x, a []float64)) {
	f = func(dst, x []float64) {
		for i := 0; i < n; i++ {
			ip, im, im2 := i+1, i-1, i-2
			if ip == n {
				ip = 0
			}
			if im < 0 {
				im += n
			}
			if im2 < 0 {
				im2 += n
			}
			dst[i] = (x[ip]-x[im2])*x[im] - x[i] + force
		}
	}
	jmul = func(dst, x, a []float64) {
		// row i of J: d/dx_{i+1} = x_{i-1}, d/dx_{i-2} = -x_{i-1},
		// d/dx_{i-1} = x_{i+1} - x_{i-2}, d/dx_i = -1.
		for i := 0; i < n; i++ {
			ip, im, im2 := i+1, i-1, i-2
			if ip == n {
				ip = 0
			}
			if im < 0 {
				im += n
			}
			if im2 < 0 {
				im2 += n
			}
			cp, cm2, cm := x[im], -x[im], x[ip]-x[im2]
			row := dst[i*n : (i+1)*n]
			ap, am2, am, ai := a[ip*n:(ip+1)*n], a[im2*n:(im2+1)*n], a[im*n:(im+1)*n], a[i*n:(i+1)*n]
			for j := range row {
				row[j] = cp*ap[j] + cm2*am2[j] + cm*am[j] - ai[j]
			}
		}
	}
	return f, jmul
}

// NewLorenz96 returns the problem "lorenz96": the model of Lorenz 1996,
// "Predictability — a problem partly solved", Proc. ECMWF Seminar on
// Predictability, and Lorenz & Emanuel 1998, "Optimal sites for
// supplementary weather observations: simulation with a small model",
// J. Atmospheric Sciences 55(3): N variables on a circle of latitude,
//
//	dx_i/dt = (x_{i+1} - x_{i-2}) x_{i-1} - x_i + F,  indices mod N,
//
// with N = 40 and F = 8, where the model is chaotic with about 13 positive
// Lyapunov exponents (Lorenz & Emanuel 1998, from memory). It is the usual
// test of ensemble filters; its state dimension defeats plain particle
// filters, which is expected.
//
// One step is one classical fourth-order Runge–Kutta step of Dt = 0.05
// (about 6 hours of the atmosphere, the step of Lorenz & Emanuel 1998),
// plus process noise N(0, q I), q = 0.01. Every other variable
// (x_0, x_2, ...) is observed with noise N(0, r I), r = 1. The Jacobian is
// the exact derivative of the Runge–Kutta step.
//
// The prior mean is a point on the attractor: from x_i = F with x_0 raised
// by 0.01, 20 time units of the noise-free model. The prior covariance is
// I, and 200 steps (10 time units) are run. q, r, the prior and the run
// length are our choice.
//
// Traits: not linear, differentiable, analytic Jacobians, additive
// Gaussian noise. Scored components: all N variables.
func NewLorenz96(cfg Lorenz96Config) (*Problem, error) {
	c, err := cfg.withDefaults()
	if err != nil {
		return nil, err
	}
	nx := c.N
	obs := make([]int, 0, (nx+1)/2)
	for i := 0; i < nx; i += 2 {
		obs = append(obs, i)
	}
	nz := len(obs)
	field, jmul := lorenz96Field(nx, c.F)
	fl := newFlow(nx, 1, c.Dt, field, jmul)
	f := func(dst, x []float64, _ int) { fl.step(dst, x) }

	spin := newFlow(nx, 1, c.Dt, field, nil)
	x0 := make([]float64, nx)
	for i := range x0 {
		x0[i] = c.F
	}
	x0[0] += 0.01
	for range int(20/c.Dt + 0.5) {
		spin.step(x0, x0)
	}

	scored := make([]int, nx)
	for i := range scored {
		scored[i] = i
	}
	hm, hj := selectComponents(nx, obs)
	p := &Problem{
		Name: "lorenz96",
		Model: filters.Model{
			Nx: nx, Nz: nz,
			F:     f,
			H:     hm,
			FJac:  func(dst, x []float64, _ int) { fl.jac(dst, x) },
			HJac:  hj,
			FMany: manyStates(nx, f),
			HMany: manyMeas(nx, nz, hm),
			Q:     scaledIdentity(nx, c.Q),
			R:     scaledIdentity(nz, c.R),
		},
		X0:     x0,
		P0:     scaledIdentity(nx, 1),
		Steps:  c.Steps,
		Dt:     c.Dt,
		Scored: scored,
		Traits: Traits{
			Differentiable:    true,
			AnalyticJacobians: true,
			AdditiveNoise:     true,
			GaussianNoise:     true,
		},
	}
	return p, nil
}
