package datasets

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"

	"github.com/estbench/estbench/filters"
)

// QuantisedConfig configures NewQuantised. Its zero value gives the defaults.
type QuantisedConfig struct {
	Dt    float64 // sampling period in s; if zero, 1 is used
	Q     float64 // vertical acceleration noise variance in m²/s⁴; if zero, 0.01 is used
	Step  float64 // quantisation step Δ in m; if zero, 1 is used
	Sigma float64 // standard deviation of the sensor noise before the quantiser, in m; if zero, 0.2 is used
	Steps int     // number of steps; if zero, 100 are used
}

func (c QuantisedConfig) withDefaults() (QuantisedConfig, error) {
	if c.Dt == 0 {
		c.Dt = 1
	}
	if c.Q == 0 {
		c.Q = 0.01
	}
	if c.Step == 0 {
		c.Step = 1
	}
	if c.Sigma == 0 {
		c.Sigma = 0.2
	}
	if c.Steps == 0 {
		c.Steps = 100
	}
	switch {
	case !positive(c.Dt):
		return c, fmt.Errorf("datasets: quantised: Dt must be a positive finite number of seconds, got %v", c.Dt)
	case !positive(c.Q):
		return c, fmt.Errorf("datasets: quantised: Q must be a positive finite variance, got %v", c.Q)
	case !positive(c.Step):
		return c, fmt.Errorf("datasets: quantised: Step must be a positive finite length, got %v", c.Step)
	case !positive(c.Sigma):
		return c, fmt.Errorf("datasets: quantised: Sigma must be a positive finite standard deviation, got %v", c.Sigma)
	case c.Steps < 1:
		return c, fmt.Errorf("datasets: quantised: Steps must be at least 1, got %d", c.Steps)
	}
	return c, nil
}

// quantise rounds y to the nearest multiple of step (halves upwards).
func quantise(y, step float64) float64 { return step * math.Floor(y/step+0.5) }

// NewQuantised returns the problem "quantised", a scenario of our own: a
// survey drone holds its altitude with small random vertical accelerations,
// and its barometric altimeter reports the altitude rounded to whole steps
// of Δ = 1 m. State x = [h, dh/dt] (m, m/s) follows the discrete white
// noise acceleration model of Bar-Shalom, Li & Kirubarajan 2001,
// "Estimation with Applications to Tracking and Navigation", §6.3.2, with
// T = 1 s and q = 0.01 m²/s⁴. The reading is quantised after the sensor's
// own noise:
//
//	z_k = Δ round((h_k + v_k)/Δ),  v_k ~ N(0, σ²),  σ = 0.2 m,
//
// so z lies on the grid ΔZ. The model gives this as HV(x, v) with Nv = 1
// and R = σ², H(x) = HV(x, 0) = Δ round(h/Δ) (a staircase, whose derivative
// is zero between the steps and undefined at them) and MeasLogLik the exact
// log-probability of the cell, log(Φ((z + Δ/2 - h)/σ) - Φ((z - Δ/2 - h)/σ)).
// The model of quantisation as additive uniform noise of variance Δ²/12
// (Widrow & Kollár 2008, "Quantization Noise", Cambridge University Press)
// is a fair approximation only when σ is not small next to Δ; at the
// defaults it is not. The prior is N([50, 0], diag(4, 0.25)) and 100 steps
// are run (our choice).
//
// Traits: not linear, not differentiable (the staircase), no analytic
// Jacobian, non-additive and non-Gaussian measurement noise. Scored
// component: the altitude h (index 0).
func NewQuantised(cfg QuantisedConfig) (*Problem, error) {
	c, err := cfg.withDefaults()
	if err != nil {
		return nil, err
	}
	t, q, d, sg := c.Dt, c.Q, c.Step, c.Sigma
	const nx, nz = 2, 1
	f := func(dst, x []float64, _ int) {
		dst[0] = x[0] + t*x[1]
		dst[1] = x[1]
	}
	h := func(dst, x []float64, _ int) { dst[0] = quantise(x[0], d) }
	qm := []float64{q * t * t * t * t / 4, q * t * t * t / 2, q * t * t * t / 2, q * t * t}
	lq := cholOrZero(qm, nx)
	p0 := diag(4, 0.25)
	lp := cholOrZero(p0, nx)
	w := make([]float64, nx)
	inv := 1 / (sg * math.Sqrt2)
	p := &Problem{
		Name: "quantised",
		Model: filters.Model{
			Nx: nx, Nz: nz,
			F:     f,
			H:     h,
			FMany: manyStates(nx, f),
			HMany: manyMeas(nx, nz, h),
			Q:     qm,
			R:     []float64{sg * sg},
			Nv:    1,
			HV:    func(dst, x, v []float64, _ int) { dst[0] = quantise(x[0]+v[0], d) },
			MeasLogLik: func(z, x []float64, _ int) float64 {
				a := (z[0] - d/2 - x[0]) * inv // cell bounds in units of σ√2
				b := (z[0] + d/2 - x[0]) * inv
				return math.Log(normalCellProb(a, b))
			},
		},
		X0:     []float64{50, 0},
		P0:     p0,
		Steps:  c.Steps,
		Dt:     t,
		Scored: []int{0},
		Traits: Traits{
			NonDifferentiable: "has a staircase measurement (quantised to " + strconv.FormatFloat(d, 'g', -1, 64) + " m)",
			NonAdditive:       "quantises the noisy reading (noise before the quantiser)",
			NonAdditiveMeas:   true,
			NonGaussian:       "has quantised measurements",
		},
		Simulate: func(p *Problem, seq *Sequence, rng *rand.Rand) {
			m := &p.Model
			seq.Resize(nx, nz, p.Steps)
			addGaussian(seq.X0, p.X0, lp, w, rng)
			prev := seq.X0
			for k := 1; k <= p.Steps; k++ {
				seq.T[k-1] = float64(k) * p.Dt
				x := seq.State(k)
				m.F(x, prev, k)
				addGaussian(x, x, lq, w, rng)
				seq.Z[k-1] = quantise(x[0]+sg*rng.NormFloat64(), d)
				seq.Has[k-1] = true
				prev = x
			}
		},
	}
	return p, nil
}

// normalCellProb returns (erf(b) - erf(a))/2 for a ≤ b, the probability of
// a standard normal cell with bounds a√2, b√2, computed from the tail on the
// side away from zero so that far cells keep their relative accuracy.
func normalCellProb(a, b float64) float64 {
	switch {
	case a >= 0:
		return (math.Erfc(a) - math.Erfc(b)) / 2
	case b <= 0:
		return (math.Erfc(-b) - math.Erfc(-a)) / 2
	}
	return (math.Erf(b) - math.Erf(a)) / 2
}
