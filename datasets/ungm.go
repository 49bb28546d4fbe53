package datasets

import (
	"fmt"
	"math"

	"github.com/estbench/estbench/filters"
)

// UNGMConfig configures NewUNGM. Its zero value gives the defaults.
type UNGMConfig struct {
	Q     float64 // process noise variance (dimensionless); if zero, 10 is used
	R     float64 // measurement noise variance; if zero, 1 is used
	P0    float64 // prior variance of x_0 (prior mean 0); if zero, 5 is used
	Steps int     // number of steps; if zero, 100 is used
}

func (c UNGMConfig) withDefaults() (UNGMConfig, error) {
	if c.Q == 0 {
		c.Q = 10
	}
	if c.R == 0 {
		c.R = 1
	}
	if c.P0 == 0 {
		c.P0 = 5
	}
	if c.Steps == 0 {
		c.Steps = 100
	}
	switch {
	case !positive(c.Q):
		return c, fmt.Errorf("datasets: ungm: Q must be a positive finite variance, got %v", c.Q)
	case !positive(c.R):
		return c, fmt.Errorf("datasets: ungm: R must be a positive finite variance, got %v", c.R)
	case !positive(c.P0):
		return c, fmt.Errorf("datasets: ungm: P0 must be a positive finite variance, got %v", c.P0)
	case c.Steps < 1:
		return c, fmt.Errorf("datasets: ungm: Steps must be at least 1, got %d", c.Steps)
	}
	return c, nil
}

// NewUNGM returns the problem "ungm", the univariate nonstationary growth
// model used to illustrate the bootstrap particle filter by Gordon, Salmond
// & Smith 1993, "Novel approach to nonlinear/non-Gaussian Bayesian state
// estimation", IEE Proceedings F 140(2), and by Kitagawa 1996, "Monte Carlo
// filter and smoother for non-Gaussian nonlinear state space models",
// J. Computational and Graphical Statistics 5(1):
//
//	x_k = x_{k-1}/2 + 25 x_{k-1}/(1 + x_{k-1}²) + 8 cos(1.2 k) + v_k,  v_k ~ N(0, Q)
//	z_k = x_k²/20 + w_k,                                               w_k ~ N(0, R)
//
// with x_0 ~ N(0, P0). Here k is the index of the new step (the forcing term
// of step k is 8 cos(1.2 k)); Gordon et al. write the forcing of step k as
// 8 cos(1.2 (k-1)), which only shifts its phase by one step (from memory).
// The squared measurement leaves the sign of x ambiguous, which makes the
// posterior bimodal and defeats Gaussian filters.
//
// Defaults (Gordon et al. 1993, from memory): Q = 10, R = 1, P0 = 5,
// 100 steps. Dt is 1 (the model has no physical time).
//
// Traits: not linear, differentiable, analytic Jacobians
// (dF/dx = 1/2 + 25(1 - x²)/(1 + x²)², dH/dx = x/10), additive Gaussian
// noise. Scored component: x (index 0).
func NewUNGM(cfg UNGMConfig) (*Problem, error) {
	c, err := cfg.withDefaults()
	if err != nil {
		return nil, err
	}
	p := &Problem{
		Name: "ungm",
		Model: filters.Model{
			Nx: 1, Nz: 1,
			F: func(dst, x []float64, k int) {
				dst[0] = ungmDrift(x[0]) + ungmForcing(k)
			},
			H: func(dst, x []float64, _ int) { dst[0] = x[0] * x[0] / 20 },
			FJac: func(dst, x []float64, _ int) {
				v := x[0]
				d := 1 + v*v
				dst[0] = 0.5 + 25*(1-v*v)/(d*d)
			},
			HJac: func(dst, x []float64, _ int) { dst[0] = x[0] / 10 },
			FMany: func(dst, x []float64, k int) {
				f := ungmForcing(k)
				dst = dst[:len(x)]
				for i, v := range x {
					dst[i] = ungmDrift(v) + f
				}
			},
			HMany: func(dst, x []float64, _ int) {
				dst = dst[:len(x)]
				for i, v := range x {
					dst[i] = v * v / 20
				}
			},
			Q: []float64{c.Q},
			R: []float64{c.R},
		},
		X0:     []float64{0},
		P0:     []float64{c.P0},
		Steps:  c.Steps,
		Dt:     1,
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

// ungmDrift is the state-dependent part of the ungm transition.
func ungmDrift(x float64) float64 { return 0.5*x + 25*x/(1+x*x) }

// ungmForcing is the time-dependent part of the ungm transition at step k.
func ungmForcing(k int) float64 { return 8 * math.Cos(1.2*float64(k)) }
