package datasets

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/estbench/estbench/filters"
)

// StochVolConfig configures NewStochVol. Its zero value gives the defaults.
type StochVolConfig struct {
	// Beta is the modal volatility β = exp(μ/2), μ being the mean of the
	// log-variance x; if zero, 0.648 is used (μ = 2 ln 0.648 ≈ -0.868).
	Beta     float64
	Phi      float64 // persistence φ in (-1, 1); if zero, 0.978 is used
	SigmaEta float64 // standard deviation σ_η of the log-variance noise; if zero, 0.158 is used
	Steps    int     // number of steps; if zero, 500 are used
	// LogSquared, if true, observes log y_k² instead of the return y_k:
	// the linear form with additive log-χ²₁ noise (see NewStochVol).
	LogSquared bool
}

func (c StochVolConfig) withDefaults() (StochVolConfig, error) {
	if c.Beta == 0 {
		c.Beta = 0.648
	}
	if c.Phi == 0 {
		c.Phi = 0.978
	}
	if c.SigmaEta == 0 {
		c.SigmaEta = 0.158
	}
	if c.Steps == 0 {
		c.Steps = 500
	}
	switch {
	case !positive(c.Beta):
		return c, fmt.Errorf("datasets: stochvol: Beta must be positive and finite, got %v", c.Beta)
	case !(c.Phi > -1 && c.Phi < 1):
		return c, fmt.Errorf("datasets: stochvol: Phi must be in (-1, 1), got %v", c.Phi)
	case !positive(c.SigmaEta):
		return c, fmt.Errorf("datasets: stochvol: SigmaEta must be a positive finite standard deviation, got %v", c.SigmaEta)
	case c.Steps < 1:
		return c, fmt.Errorf("datasets: stochvol: Steps must be at least 1, got %d", c.Steps)
	}
	return c, nil
}

// Moments of log ε², ε ~ N(0, 1): E = ψ(1/2) + ln 2 = -γ - ln 2 and
// Var = ψ'(1/2) = π²/2 (Abramowitz & Stegun 1964, 6.3.3 and 6.4.4).
const (
	logChi2Mean = -0.57721566490153286 - 0.69314718055994531
	logChi2Var  = math.Pi * math.Pi / 2
	halfLog2Pi  = 0.91893853320467274 // ½ ln 2π
)

// NewStochVol returns the problem "stochvol": the discrete-time stochastic
// volatility model of Kim, Shephard & Chib 1998, "Stochastic volatility:
// likelihood inference and comparison with ARCH models", Review of Economic
// Studies 65(3),
//
//	x_k = μ + φ (x_{k-1} - μ) + σ_η η_k,  η_k ~ N(0, 1)
//	y_k = exp(x_k/2) ε_k,                 ε_k ~ N(0, 1)
//
// where y_k is a (mean-corrected) return and x_k its log-variance. The
// source writes y_k = β exp(h_k/2) ε_k with h of mean zero; here x = h + μ,
// μ = 2 ln β. Defaults, rounded from the posterior means KSC report for
// daily sterling/dollar returns (from memory): φ = 0.978, σ_η = 0.158,
// β = 0.648. The prior is the stationary law N(μ, σ_η²/(1-φ²)), and 500
// steps are run (our choice).
//
// The measurement noise multiplies: the model gives HV(x, ε) = exp(x/2) ε
// with ε ~ N(0, R = 1), H(x) = HV(x, 0) = 0, and MeasLogLik the exact
// log-density log p(y | x) = -½ ln 2π - x/2 - y² e^{-x}/2. Filters that need
// additive noise do not apply.
//
// With cfg.LogSquared the measurement is z_k = log y_k² = x_k + log ε_k²
// instead, the linear form of Harvey, Ruiz & Shephard 1994, "Multivariate
// stochastic variance models", Review of Economic Studies 61(2), also the
// starting point of KSC's mixture sampler: Model.H(x) = x + E log ε² and
// R = Var log ε² = π²/2 are the moment-matched Gaussian (a Kalman filter
// on them is Harvey et al.'s quasi-maximum-likelihood filter), and
// MeasLogLik is the exact log-density of the log-χ²₁ noise,
// log p(z | x) = -½ ln 2π + (z-x)/2 - e^{z-x}/2. A simulated ε of exactly
// zero (probability below 2⁻³⁰ per step) is drawn again, so that z is
// finite.
//
// Traits: returns form — not linear, differentiable, analytic Jacobians,
// non-additive, non-Gaussian measurement noise; log-squared form — linear
// (affine), additive, non-Gaussian. Scored component: x (index 0).
func NewStochVol(cfg StochVolConfig) (*Problem, error) {
	c, err := cfg.withDefaults()
	if err != nil {
		return nil, err
	}
	mu := 2 * math.Log(c.Beta)
	phi, se := c.Phi, c.SigmaEta
	f := func(dst, x []float64, _ int) { dst[0] = mu + phi*(x[0]-mu) }
	m := filters.Model{
		Nx: 1, Nz: 1,
		F:    f,
		FJac: func(dst, _ []float64, _ int) { dst[0] = phi },
		FMany: func(dst, x []float64, _ int) {
			dst = dst[:len(x)]
			for i, v := range x {
				dst[i] = mu + phi*(v-mu)
			}
		},
		Q: []float64{se * se},
	}
	tr := Traits{
		Differentiable:    true,
		AnalyticJacobians: true,
	}
	if c.LogSquared {
		m.H = func(dst, x []float64, _ int) { dst[0] = x[0] + logChi2Mean }
		m.HJac = func(dst, _ []float64, _ int) { dst[0] = 1 }
		m.HMany = func(dst, x []float64, _ int) {
			dst = dst[:len(x)]
			for i, v := range x {
				dst[i] = v + logChi2Mean
			}
		}
		m.R = []float64{logChi2Var}
		m.Linear = true
		m.MeasLogLik = func(z, x []float64, _ int) float64 {
			u := z[0] - x[0]
			return -halfLog2Pi + u/2 - math.Exp(u)/2
		}
		tr.Linear = true
		tr.AdditiveNoise = true
		tr.NonGaussian = "has log-chi-square measurement noise"
	} else {
		m.H = func(dst, _ []float64, _ int) { dst[0] = 0 }
		m.HJac = func(dst, _ []float64, _ int) { dst[0] = 0 }
		m.HMany = func(dst, x []float64, _ int) {
			dst = dst[:len(x)]
			for i := range dst {
				dst[i] = 0
			}
		}
		m.Nv = 1
		m.HV = func(dst, x, v []float64, _ int) { dst[0] = math.Exp(x[0]/2) * v[0] }
		m.R = []float64{1}
		m.MeasLogLik = func(z, x []float64, _ int) float64 {
			return -halfLog2Pi - x[0]/2 - z[0]*z[0]*math.Exp(-x[0])/2
		}
		tr.NonAdditive = "has multiplicative measurement noise (y = exp(x/2) ε)"
		tr.NonAdditiveMeas = true
		tr.NonGaussian = "has a non-Gaussian measurement density"
	}
	sx := se / math.Sqrt(1-phi*phi) // stationary standard deviation of x
	logSq := c.LogSquared
	p := &Problem{
		Name:   "stochvol",
		Model:  m,
		X0:     []float64{mu},
		P0:     []float64{sx * sx},
		Steps:  c.Steps,
		Dt:     1,
		Scored: []int{0},
		Traits: tr,
		Simulate: func(p *Problem, seq *Sequence, rng *rand.Rand) {
			seq.Resize(1, 1, p.Steps)
			x := mu + sx*rng.NormFloat64()
			seq.X0[0] = x
			for k := 1; k <= p.Steps; k++ {
				seq.T[k-1] = float64(k)
				x = mu + phi*(x-mu) + se*rng.NormFloat64()
				seq.Truth[k-1] = x
				e := rng.NormFloat64()
				if logSq {
					for e == 0 {
						e = rng.NormFloat64()
					}
					seq.Z[k-1] = x + math.Log(e*e)
				} else {
					seq.Z[k-1] = math.Exp(x/2) * e
				}
				seq.Has[k-1] = true
			}
		},
	}
	return p, nil
}
