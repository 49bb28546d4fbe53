package datasets

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/estbench/estbench/filters"
)

// RickerConfig configures NewRicker. Its zero value gives the defaults.
type RickerConfig struct {
	LogR   float64 // log growth rate ln r; if zero, 3.8 is used
	SigmaE float64 // standard deviation σ_e of the log-normal process noise; if zero, 0.3 is used
	R      float64 // variance of the census error; if zero, 0.25 is used
	Steps  int     // number of steps; if zero, 100 are used
}

func (c RickerConfig) withDefaults() (RickerConfig, error) {
	if c.LogR == 0 {
		c.LogR = 3.8
	}
	if c.SigmaE == 0 {
		c.SigmaE = 0.3
	}
	if c.R == 0 {
		c.R = 0.25
	}
	if c.Steps == 0 {
		c.Steps = 100
	}
	switch {
	case !(c.LogR > -20 && c.LogR < 20):
		return c, fmt.Errorf("datasets: multnoise: LogR must be in (-20, 20), got %v", c.LogR)
	case !positive(c.SigmaE) || c.SigmaE > 10:
		return c, fmt.Errorf("datasets: multnoise: SigmaE must be a standard deviation in (0, 10], got %v", c.SigmaE)
	case !positive(c.R):
		return c, fmt.Errorf("datasets: multnoise: R must be a positive finite variance, got %v", c.R)
	case c.Steps < 1:
		return c, fmt.Errorf("datasets: multnoise: Steps must be at least 1, got %d", c.Steps)
	}
	return c, nil
}

// NewRicker returns the problem "multnoise": a population following the
// stochastic Ricker map, whose process noise multiplies the state. The map
// is Ricker's 1954 stock-recruitment model ("Stock and recruitment",
// J. Fisheries Research Board of Canada 11(5)); the log-normal noise and the
// chaotic growth rate are those of Wood 2010, "Statistical inference for
// noisy nonlinear ecological dynamic systems", Nature 466 (from memory):
//
//	N_k = r N_{k-1} exp(-N_{k-1} + e_k),  e_k ~ N(0, σ_e²),
//
// with ln r = 3.8 and σ_e = 0.3, so that the population booms and crashes
// chaotically: the noise-free map peaks at r/e ≈ 16.4, and at the defaults
// over a quarter of the simulated steps are crashes below 0.01 (some below
// 1e-15), from which the population regrows by a factor of about r = 45
// per step.
//
// The model gives FW(N, e) = r N exp(-N + e) with Nw = 1 and Q = σ_e², and
// F = FW(·, 0). The noise factor e^{e_k} is log-normal with mean
// exp(σ_e²/2).
//
// Wood observes Poisson counts of mean 10 N; here the census is
// z_k = N_k + v_k with v_k ~ N(0, R), R = 0.25 (our choice), so that only
// the process noise is non-additive. The prior is N_0 of mean 1 and
// variance 0.01, drawn log-normal (with that mean and variance) so that
// the true population is positive; 100 steps are run (Wood uses 50 after a
// burn-in). Filters that draw from N(X0, P0) may start a particle below
// zero, whose next state is negative and is then weighted out by the
// census.
//
// Traits: not linear, differentiable (F' = r e^{-N}(1 - N)), analytic
// Jacobians, non-additive (multiplicative) process noise, Gaussian noise
// (the process noise enters through exp, but e_k itself is Gaussian).
// Scored component: N (index 0).
func NewRicker(cfg RickerConfig) (*Problem, error) {
	c, err := cfg.withDefaults()
	if err != nil {
		return nil, err
	}
	r := math.Exp(c.LogR)
	se := c.SigmaE
	const x0, p0 = 1.0, 0.01
	// Log-normal prior with mean x0 and variance p0.
	ls2 := math.Log1p(p0 / (x0 * x0))
	lmu, ls := math.Log(x0)-ls2/2, math.Sqrt(ls2)
	lr := math.Sqrt(c.R)
	p := &Problem{
		Name: "multnoise",
		Model: filters.Model{
			Nx: 1, Nz: 1,
			F:    func(dst, x []float64, _ int) { dst[0] = r * x[0] * math.Exp(-x[0]) },
			H:    func(dst, x []float64, _ int) { dst[0] = x[0] },
			FJac: func(dst, x []float64, _ int) { dst[0] = r * math.Exp(-x[0]) * (1 - x[0]) },
			HJac: func(dst, _ []float64, _ int) { dst[0] = 1 },
			FMany: func(dst, x []float64, _ int) {
				dst = dst[:len(x)]
				for i, v := range x {
					dst[i] = r * v * math.Exp(-v)
				}
			},
			HMany: func(dst, x []float64, _ int) { copy(dst[:len(x)], x) },
			Q:     []float64{se * se},
			R:     []float64{c.R},
			Nw:    1,
			FW:    func(dst, x, w []float64, _ int) { dst[0] = r * x[0] * math.Exp(w[0]-x[0]) },
		},
		X0:     []float64{x0},
		P0:     []float64{p0},
		Steps:  c.Steps,
		Dt:     1,
		Scored: []int{0},
		Traits: Traits{
			Differentiable:    true,
			AnalyticJacobians: true,
			GaussianNoise:     true,
			NonAdditive:       "has multiplicative process noise",
		},
		Simulate: func(p *Problem, seq *Sequence, rng *rand.Rand) {
			seq.Resize(1, 1, p.Steps)
			n := math.Exp(lmu + ls*rng.NormFloat64())
			seq.X0[0] = n
			for k := 1; k <= p.Steps; k++ {
				seq.T[k-1] = float64(k)
				n = r * n * math.Exp(se*rng.NormFloat64()-n)
				seq.Truth[k-1] = n
				seq.Z[k-1] = n + lr*rng.NormFloat64()
				seq.Has[k-1] = true
			}
		},
	}
	return p, nil
}
