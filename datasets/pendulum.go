package datasets

import (
	"fmt"
	"math"

	"github.com/estbench/estbench/filters"
)

// PendulumConfig configures NewPendulum. Its zero value gives the defaults.
type PendulumConfig struct {
	Dt    float64 // sampling period Δt in s; if zero, 0.01 is used
	Qc    float64 // spectral density q_c of the angular acceleration noise in rad²/s³; if zero, 0.01 is used
	G     float64 // gravitational constant over pendulum length g in 1/s²; if zero, 9.81 is used
	R     float64 // measurement noise variance; if zero, 0.1 is used
	Steps int     // number of steps; if zero, 500 are used
	// RK4 integrates each step with one classical fourth-order Runge–Kutta
	// step instead of the book's explicit Euler step.
	RK4 bool
}

func (c PendulumConfig) withDefaults() (PendulumConfig, error) {
	if c.Dt == 0 {
		c.Dt = 0.01
	}
	if c.Qc == 0 {
		c.Qc = 0.01
	}
	if c.G == 0 {
		c.G = 9.81
	}
	if c.R == 0 {
		c.R = 0.1
	}
	if c.Steps == 0 {
		c.Steps = 500
	}
	switch {
	case !positive(c.Dt):
		return c, fmt.Errorf("datasets: pendulum: Dt must be a positive finite number of seconds, got %v", c.Dt)
	case !positive(c.Qc):
		return c, fmt.Errorf("datasets: pendulum: Qc must be a positive finite spectral density, got %v", c.Qc)
	case !positive(c.G):
		return c, fmt.Errorf("datasets: pendulum: G must be positive and finite, got %v", c.G)
	case !positive(c.R):
		return c, fmt.Errorf("datasets: pendulum: R must be a positive finite variance, got %v", c.R)
	case c.Steps < 1:
		return c, fmt.Errorf("datasets: pendulum: Steps must be at least 1, got %d", c.Steps)
	}
	return c, nil
}

// NewPendulum returns the problem "pendulum": the angle of a pendulum and
// its rate, observed through the sine of the angle (the horizontal position
// of the bob). It is the pendulum example of Särkkä 2013, "Bayesian
// Filtering and Smoothing", Cambridge University Press, Examples 3.7 and
// 5.1 (numbers recalled from memory).
//
// State x = [α, dα/dt] (rad, rad/s). The continuous model
// d²α/dt² = -g sin α + w(t), with w white noise of spectral density q_c,
// is discretised as in the book by an explicit Euler step:
//
//	x_k = [α + Δt dα/dt, dα/dt - g sin(α) Δt] + q_k,
//	Q = q_c [[Δt³/3, Δt²/2], [Δt²/2, Δt]],
//
// and z_k = sin(α_k) + r_k, r_k ~ N(0, R). With cfg.RK4 the noise-free part
// is one classical Runge–Kutta step instead (our addition; the noise is
// the same). Defaults (book, from memory): Δt = 0.01 s, q_c = 0.01,
// g = 9.81, R = 0.1; 500 steps (5 s) and the prior N([1.5, 0],
// diag(0.1, 0.1)) are our choice. The sine saturates at α = ±π/2, near the
// initial swing, so the angle is then poorly determined.
//
// Traits: not linear, differentiable, analytic Jacobians, additive
// Gaussian noise. α is an angle (Model.AngleState). Scored component: the
// angle α (index 0).
func NewPendulum(cfg PendulumConfig) (*Problem, error) {
	c, err := cfg.withDefaults()
	if err != nil {
		return nil, err
	}
	const nx, nz = 2, 1
	dt, g := c.Dt, c.G
	var f func(dst, x []float64, k int)
	var fj func(dst, x []float64, k int)
	if c.RK4 {
		field := func(dst, x []float64) {
			dst[0] = x[1]
			dst[1] = -g * math.Sin(x[0])
		}
		jmul := func(dst, x, a []float64) { // [[0, 1], [-g cos α, 0]] a
			gc := -g * math.Cos(x[0])
			dst[0], dst[1] = a[2], a[3]
			dst[2], dst[3] = gc*a[0], gc*a[1]
		}
		fl := newFlow(nx, 1, dt, field, jmul)
		f = func(dst, x []float64, _ int) { fl.step(dst, x) }
		fj = func(dst, x []float64, _ int) { fl.jac(dst, x) }
	} else {
		f = func(dst, x []float64, _ int) {
			a, w := x[0], x[1]
			dst[0] = a + w*dt
			dst[1] = w - g*math.Sin(a)*dt
		}
		fj = func(dst, x []float64, _ int) {
			dst[0], dst[1] = 1, dt
			dst[2], dst[3] = -g*math.Cos(x[0])*dt, 1
		}
	}
	h := func(dst, x []float64, _ int) { dst[0] = math.Sin(x[0]) }
	qc := c.Qc
	p := &Problem{
		Name: "pendulum",
		Model: filters.Model{
			Nx: nx, Nz: nz,
			F:     f,
			H:     h,
			FJac:  fj,
			HJac:  func(dst, x []float64, _ int) { dst[0], dst[1] = math.Cos(x[0]), 0 },
			FMany: manyStates(nx, f),
			HMany: func(dst, x []float64, _ int) {
				for i := 0; i+nx <= len(x); i += nx {
					dst[i/nx] = math.Sin(x[i])
				}
			},
			Q: []float64{
				qc * dt * dt * dt / 3, qc * dt * dt / 2,
				qc * dt * dt / 2, qc * dt,
			},
			R:          []float64{c.R},
			AngleState: []int{0},
		},
		X0:     []float64{1.5, 0},
		P0:     diag(0.1, 0.1),
		Steps:  c.Steps,
		Dt:     dt,
		Scored: []int{0},
		Traits: Traits{
			Differentiable:    true,
			AnalyticJacobians: true,
			AdditiveNoise:     true,
			GaussianNoise:     true,
		},
	}
	return p, nil
}
