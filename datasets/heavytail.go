package datasets

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// HeavyTailConfig configures NewHeavyTail. Its zero value gives the defaults.
type HeavyTailConfig struct {
	Dt    float64 // sampling period in s; if zero, 1 is used
	Q     float64 // acceleration noise variance in m²/s⁴; if zero, 1 is used
	Steps int     // number of steps; if zero, 100 are used

	// Noise is the measurement noise law: "glint" (the default if empty), a
	// two-component Gaussian mixture, or "t", a bivariate Student t.
	Noise string
	Sigma float64 // nominal standard deviation per axis in m (glint: the frequent component; t: the scale); if zero, 10 is used
	Eps   float64 // glint: probability of the wide component, in (0, 1); if zero, 0.1 is used
	Ratio float64 // glint: standard deviation of the wide component over Sigma, at least 1; if zero, 10 is used
	Nu    float64 // t: degrees of freedom, above 2 so that R is finite; if zero, 3 is used
}

func (c HeavyTailConfig) withDefaults() (HeavyTailConfig, error) {
	if c.Noise == "" {
		c.Noise = "glint"
	}
	if c.Sigma == 0 {
		c.Sigma = 10
	}
	if c.Eps == 0 {
		c.Eps = 0.1
	}
	if c.Ratio == 0 {
		c.Ratio = 10
	}
	if c.Nu == 0 {
		c.Nu = 3
	}
	switch {
	case c.Noise != "glint" && c.Noise != "t":
		return c, fmt.Errorf(`datasets: heavytail: Noise must be "glint" or "t", got %q`, c.Noise)
	case !positive(c.Sigma):
		return c, fmt.Errorf("datasets: heavytail: Sigma must be a positive finite standard deviation, got %v", c.Sigma)
	case !(c.Eps > 0 && c.Eps < 1):
		return c, fmt.Errorf("datasets: heavytail: Eps must be in (0, 1), got %v", c.Eps)
	case !(c.Ratio >= 1) || !positive(c.Ratio):
		return c, fmt.Errorf("datasets: heavytail: Ratio must be finite and at least 1, got %v", c.Ratio)
	case !(c.Nu > 2) || !positive(c.Nu):
		return c, fmt.Errorf("datasets: heavytail: Nu must be finite and above 2, got %v", c.Nu)
	}
	return c, nil
}

// NewHeavyTail returns the problem "heavytail": the cv2d target (see
// NewCV2D; dynamics, prior and steps as there) observed in position through
// heavy-tailed noise, of one of two laws (cfg.Noise):
//
// "glint" (the default): the apparent position of a radar target wanders
// over its extent (glint), which Hewer, Martin & Zeh 1987, "Robust
// preprocessing for Kalman filtering of glint noise", IEEE Trans. Aerospace
// and Electronic Systems 23(1), model as Gaussian noise with occasional
// much wider outliers (from memory), the ε-contaminated Gaussian of
// Masreliez & Martin 1977, "Robust Bayesian estimation for the linear model
// and robustifying the Kalman filter", IEEE Trans. Automatic Control 22(3):
// with probability 1-ε the 2-vector noise is N(0, σ² I), with probability ε
// N(0, (κσ)² I). Defaults (our choice): σ = 10 m, ε = 0.1, κ = 10.
// Per axis the variance is ((1-ε) + εκ²) σ² and the kurtosis
// 3 ((1-ε) + εκ⁴) / ((1-ε) + εκ²)² (25.0 at the defaults).
//
// "t": the bivariate Student t with ν degrees of freedom and scale σ,
// v = σ g √(ν/u), g ~ N(0, I), u ~ χ²_ν; per axis the variance is
// σ² ν/(ν-2) and, for ν > 4, the kurtosis 3 + 6/(ν-4). Default ν = 3
// (infinite kurtosis).
//
// The simulator draws from the true law (the chi-square through the gamma
// sampler of Marsaglia & Tsang 2000, "A simple method for generating gamma
// variables", ACM Trans. Mathematical Software 26(3)). Model.R is the
// moment-matched covariance, for Gaussian filters, and Model.MeasLogLik the
// exact log-density, for particle filters.
//
// Traits: linear, differentiable, analytic Jacobians, additive noise, not
// Gaussian. Scored components: the positions (indices 0 and 2).
func NewHeavyTail(cfg HeavyTailConfig) (*Problem, error) {
	c, err := cfg.withDefaults()
	if err != nil {
		return nil, err
	}
	p, err := NewCV2D(CV2DConfig{Dt: cfg.Dt, Q: cfg.Q, Steps: cfg.Steps})
	if err != nil {
		return nil, fmt.Errorf("datasets: heavytail: %w", err)
	}
	p.Name = "heavytail"
	m := &p.Model
	s := c.Sigma
	s2 := s * s
	lq := cholOrZero(m.Q, 4)
	lp := cholOrZero(p.P0, 4)
	w := make([]float64, 4)
	v := new([2]float64) // one noise draw
	var draw func(v *[2]float64, rng *rand.Rand)
	var r float64
	if c.Noise == "glint" {
		eps, wide := c.Eps, c.Ratio*s
		r = ((1 - eps) + eps*c.Ratio*c.Ratio) * s2
		// log-densities of the two components at a squared distance d2,
		// with their mixture weights folded in
		la := math.Log(1-eps) - math.Log(2*math.Pi*s2)
		lb := math.Log(eps) - math.Log(2*math.Pi*wide*wide)
		ia, ib := 1/(2*s2), 1/(2*wide*wide)
		m.MeasLogLik = func(z, x []float64, _ int) float64 {
			dx, dy := z[0]-x[0], z[1]-x[2]
			d2 := dx*dx + dy*dy
			a, b := la-ia*d2, lb-ib*d2
			if a < b {
				a, b = b, a
			}
			return a + math.Log1p(math.Exp(b-a))
		}
		draw = func(v *[2]float64, rng *rand.Rand) {
			sd := s
			if rng.Float64() < eps {
				sd = wide
			}
			v[0], v[1] = sd*rng.NormFloat64(), sd*rng.NormFloat64()
		}
		p.Traits.NonGaussian = "has glint (Gaussian-mixture) measurement noise"
	} else {
		nu := c.Nu
		r = s2 * nu / (nu - 2)
		lc := lgamma((nu+2)/2) - lgamma(nu/2) - math.Log(nu*math.Pi*s2)
		m.MeasLogLik = func(z, x []float64, _ int) float64 {
			dx, dy := z[0]-x[0], z[1]-x[2]
			return lc - (nu+2)/2*math.Log1p((dx*dx+dy*dy)/(nu*s2))
		}
		draw = func(v *[2]float64, rng *rand.Rand) {
			u := 2 * gammaDraw(nu/2, rng)
			f := s * math.Sqrt(nu/u)
			v[0], v[1] = f*rng.NormFloat64(), f*rng.NormFloat64()
		}
		p.Traits.NonGaussian = "has Student-t measurement noise"
	}
	m.R[0], m.R[1], m.R[2], m.R[3] = r, 0, 0, r
	p.Traits.GaussianNoise = false
	p.Simulate = func(p *Problem, seq *Sequence, rng *rand.Rand) {
		m := &p.Model
		seq.Resize(4, 2, p.Steps)
		addGaussian(seq.X0, p.X0, lp, w, rng)
		prev := seq.X0
		for k := 1; k <= p.Steps; k++ {
			seq.T[k-1] = float64(k) * p.Dt
			x := seq.State(k)
			m.F(x, prev, k)
			addGaussian(x, x, lq, w, rng)
			draw(v, rng)
			z := seq.Z[(k-1)*2 : k*2]
			z[0], z[1] = x[0]+v[0], x[2]+v[1]
			seq.Has[k-1] = true
			prev = x
		}
	}
	return p, nil
}

func lgamma(x float64) float64 {
	v, _ := math.Lgamma(x)
	return v
}

// gammaDraw draws from the gamma law of shape a > 0 and unit scale by the
// method of Marsaglia & Tsang 2000 (ACM TOMS 26(3)), with the boost
// G(a) = G(a+1) U^{1/a} for a < 1 given there.
func gammaDraw(a float64, rng *rand.Rand) float64 {
	boost := 1.0
	if a < 1 {
		boost = math.Pow(1-rng.Float64(), 1/a) // U in (0, 1]
		a++
	}
	d := a - 1.0/3
	c := 1 / math.Sqrt(9*d)
	for {
		var x, v float64
		for {
			x = rng.NormFloat64()
			v = 1 + c*x
			if v > 0 {
				break
			}
		}
		v = v * v * v
		u := 1 - rng.Float64() // in (0, 1]
		x2 := x * x
		if u < 1-0.0331*x2*x2 || math.Log(u) < x2/2+d*(1-v+math.Log(v)) {
			return boost * d * v
		}
	}
}
