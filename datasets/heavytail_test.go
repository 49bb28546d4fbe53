package datasets

import (
	"math"
	"testing"
)

// measNoise collects the measurement noise z - H(x) of runs of p, per axis.
func measNoise(t *testing.T, p *Problem, runs int, seed uint64) []float64 {
	t.Helper()
	var seq Sequence
	rng := newRNG(seed, seed+1)
	var v []float64
	h := make([]float64, 2)
	for r := 0; r < runs; r++ {
		p.Run(&seq, rng)
		for k := 1; k <= seq.Steps; k++ {
			p.Model.H(h, seq.State(k), k)
			z := seq.Meas(k)
			v = append(v, z[0]-h[0], z[1]-h[1])
		}
	}
	return v
}

// moments returns the sample variance and kurtosis of v about zero.
func moments(v []float64) (variance, kurtosis float64) {
	var s2, s4 float64
	for _, x := range v {
		s2 += x * x
		s4 += x * x * x * x
	}
	n := float64(len(v))
	return s2 / n, (s4 / n) / ((s2 / n) * (s2 / n))
}

// Kurtosis and variance of the heavy-tailed measurement noise (closed
// forms): the ε-contaminated Gaussian (Masreliez & Martin 1977; glint,
// Hewer, Martin & Zeh 1987) has per-axis variance ((1-ε) + εκ²) σ² (= Model.R)
// and kurtosis 3 ((1-ε) + εκ⁴)/((1-ε) + εκ²)²; the Student t with ν
// degrees of freedom has variance σ² ν/(ν-2) and kurtosis 3 + 6/(ν-4)
// (Johnson, Kotz & Balakrishnan 1995, "Continuous Univariate
// Distributions" vol. 2, ch. 28). The sample kurtosis converges slowly for
// heavy tails; the configurations are chosen so that its standard error
// (from the sixth and eighth moments, by the delta method; by hand about
// 1.0% and 0.7% here) is small, and 5% is accepted: glint with ε = 0.1,
// κ = 3 (kurtosis 8.33) and t with ν = 12 (kurtosis 3.75), over 4e5 draws
// each (the two axes of one measurement share the mixture draw, which
// widens the error a little); variances within 2% (over 5 standard
// errors).
func TestHeavyTailKurtosis(t *testing.T) {
	for _, tc := range []struct {
		name          string
		cfg           HeavyTailConfig
		wantV, wantK  float64
		toleranceKurt float64
	}{
		{"glint", HeavyTailConfig{Eps: 0.1, Ratio: 3, Sigma: 2}, (0.9 + 0.1*9) * 4, 3 * (0.9 + 0.1*81) / ((0.9 + 0.9) * (0.9 + 0.9)), 0.05},
		{"t", HeavyTailConfig{Noise: "t", Nu: 12, Sigma: 2}, 4 * 12.0 / 10, 3 + 6.0/8, 0.05},
	} {
		t.Run(tc.name, func(t *testing.T) {
			p, err := NewHeavyTail(tc.cfg)
			if err != nil {
				t.Fatal(err)
			}
			if !near(p.Model.R[0], tc.wantV, 0, 1e-12) || p.Model.R[3] != p.Model.R[0] || p.Model.R[1] != 0 {
				t.Fatalf("R = %v, want %v I", p.Model.R, tc.wantV)
			}
			v := measNoise(t, p, 2000, 71)
			gv, gk := moments(v)
			if !near(gv, tc.wantV, 0, 0.02) {
				t.Errorf("variance %v, want %v", gv, tc.wantV)
			}
			if !near(gk, tc.wantK, 0, tc.toleranceKurt) {
				t.Errorf("kurtosis %v, want %v", gk, tc.wantK)
			}
		})
	}
}

// The gamma sampler of Marsaglia & Tsang 2000 (ACM TOMS 26(3)), below and
// above shape 1: the gamma law of shape a has mean a and variance a
// (closed form); sample moments of 2e5 draws within 5 standard errors
// (the fourth central moment being 3a² + 6a).
func TestGammaDraw(t *testing.T) {
	rng := newRNG(81, 82)
	for _, a := range []float64{0.3, 1, 1.5, 6} {
		const n = 200000
		var s, ss float64
		for i := 0; i < n; i++ {
			g := gammaDraw(a, rng)
			if !(g > 0) {
				t.Fatalf("shape %v: draw %v", a, g)
			}
			s += g
			ss += (g - a) * (g - a)
		}
		if m := s / n; math.Abs(m-a) > 5*math.Sqrt(a/n) {
			t.Errorf("shape %v: mean %v", a, m)
		}
		if v := ss / n; math.Abs(v-a) > 5*math.Sqrt((3*a*a+6*a-a*a)/n) {
			t.Errorf("shape %v: variance %v", a, v)
		}
	}
}

// The exact densities are normalised over the plane (any density): the
// radial integral 2π ∫ p(r) r dr of MeasLogLik, by the trapezoidal rule,
// is 1 for both laws; and the glint density is the two-component mixture
// written out by hand at one point.
func TestHeavyTailDensities(t *testing.T) {
	for _, cfg := range []HeavyTailConfig{{}, {Noise: "t"}, {Noise: "t", Nu: 7.5, Sigma: 3}, {Eps: 0.3, Ratio: 4}} {
		p, err := NewHeavyTail(cfg)
		if err != nil {
			t.Fatal(err)
		}
		x := []float64{10, -3, 20, 4}
		ll := p.Model.MeasLogLik
		// In u = ln r, ∫ p r dr = ∫ p r² du over r in [1e-6, 1e6] m: the t
		// tail beyond 1e6 carries below 1e-10 of the mass for ν ≥ 3 with
		// σ ≤ 10 (P(|v| > r) = (1 + r²/(νσ²))^{-ν/2}), the disc inside
		// 1e-6 below 1e-12.
		const n = 200000
		lo, hi := math.Log(1e-6), math.Log(1e6)
		h := (hi - lo) / n
		var s float64
		for i := 0; i <= n; i++ {
			r := math.Exp(lo + float64(i)*h)
			w := 1.0
			if i == 0 || i == n {
				w = 0.5
			}
			s += w * math.Exp(ll([]float64{x[0] + r, x[2]}, x, 1)) * r * r
		}
		if v := 2 * math.Pi * s * h; !near(v, 1, 1e-9, 0) {
			t.Errorf("%+v: ∫ p = %v", cfg, v)
		}
	}
	p, _ := NewHeavyTail(HeavyTailConfig{})
	x := []float64{0, 0, 0, 0}
	z := []float64{12, -5} // distance² 169
	want := math.Log(0.9/(2*math.Pi*100)*math.Exp(-169.0/200) + 0.1/(2*math.Pi*10000)*math.Exp(-169.0/20000))
	if got := p.Model.MeasLogLik(z, x, 1); !near(got, want, 1e-14, 1e-14) {
		t.Errorf("glint log-density %v, want %v", got, want)
	}
	if p.Traits.GaussianNoise || !p.Traits.Linear || !p.Traits.AdditiveNoise {
		t.Errorf("traits %+v", p.Traits)
	}
	for _, cfg := range []HeavyTailConfig{{Noise: "cauchy"}, {Nu: 2}, {Eps: 1}, {Ratio: 0.5}, {Sigma: -1}, {Q: -1}} {
		if _, err := NewHeavyTail(cfg); err == nil {
			t.Errorf("NewHeavyTail(%+v) gave no error", cfg)
		}
	}
}
