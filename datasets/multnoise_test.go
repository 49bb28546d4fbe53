package datasets

import (
	"math"
	"testing"
)

// The stochastic Ricker map with log-normal noise (Ricker 1954; Wood 2010):
// log N_k - log(r N_{k-1} e^{-N_{k-1}}) = e_k ~ N(0, σ_e²) exactly, so the
// sample mean and variance of the log-increments of simulated runs agree
// with 0 and σ_e² within 5 standard errors, and the noise factor
// N_k / F(N_{k-1}) has the log-normal mean exp(σ_e²/2) (5σ rule: common
// practice with no source; fixed seed). The census error z - N is N(0, R).
// The initial state is log-normal with mean 1 and variance 0.01.
func TestRickerNoise(t *testing.T) {
	p, err := NewRicker(RickerConfig{})
	if err != nil {
		t.Fatal(err)
	}
	const se = 0.3
	var seq Sequence
	rng := newRNG(61, 62)
	f := make([]float64, 1)
	var s, ss, sf, sv, svv, s0, s00 float64
	n, runs := 0, 400
	minN, maxN := math.Inf(1), 0.0
	for r := 0; r < runs; r++ {
		p.Run(&seq, rng)
		d0 := seq.X0[0] - 1
		s0 += d0
		s00 += d0 * d0
		prev := seq.X0
		for k := 1; k <= seq.Steps; k++ {
			x := seq.State(k)
			p.Model.F(f, prev, k)
			e := math.Log(x[0]) - math.Log(f[0])
			s += e
			ss += e * e
			sf += x[0] / f[0]
			v := seq.Meas(k)[0] - x[0]
			sv += v
			svv += v * v
			minN, maxN = math.Min(minN, x[0]), math.Max(maxN, x[0])
			n++
			prev = x
		}
	}
	N := float64(n)
	v := se * se
	lm := math.Exp(v / 2)
	lv := (math.Exp(v) - 1) * math.Exp(v) // variance of the log-normal factor
	for _, c := range []struct {
		what           string
		got, want, sde float64
	}{
		{"mean of e", s / N, 0, math.Sqrt(v / N)},
		{"var of e", ss / N, v, v * math.Sqrt(2/N)},
		{"mean of the noise factor", sf / N, lm, math.Sqrt(lv / N)},
		{"mean of the census error", sv / N, 0, math.Sqrt(0.25 / N)},
		{"var of the census error", svv / N, 0.25, 0.25 * math.Sqrt(2/N)},
		{"mean of N0 - 1", s0 / float64(runs), 0, math.Sqrt(0.01 / float64(runs))},
	} {
		if math.Abs(c.got-c.want) > 5*c.sde {
			t.Errorf("%s = %v, want %v ± %v", c.what, c.got, c.want, 5*c.sde)
		}
	}
	// Variance of N0 within 5 standard errors, from the fourth central
	// moment of the log-normal, (w⁴ + 2w³ + 3w² - 3) σ⁴ with w = e^{s²}
	// (its kurtosis, Johnson, Kotz & Balakrishnan 1994, "Continuous
	// Univariate Distributions" vol. 1, ch. 14).
	w := 1 + 0.01 // e^{s²} = 1 + variance/mean²
	m4 := (w*w*w*w + 2*w*w*w + 3*w*w - 3) * 1e-4
	if got := s00 / float64(runs); math.Abs(got-0.01) > 5*math.Sqrt((m4-1e-4)/float64(runs)) {
		t.Errorf("var of N0 = %v, want 0.01", got)
	}
	if minN <= 0 || minN > 0.01 || maxN < 10 {
		t.Errorf("population range [%v, %v]: expected positive crashes below 0.01 and booms above 10", minN, maxN)
	}
}

// The noise-free Ricker map r N e^{-N} (Ricker 1954) has its maximum r/e
// at N = 1, where F' = r e^{-N}(1 - N) vanishes (calculus); FW(N, e)
// multiplies F by e^{e}.
func TestRickerMap(t *testing.T) {
	p, _ := NewRicker(RickerConfig{})
	r := math.Exp(3.8)
	f, j := make([]float64, 1), make([]float64, 1)
	p.Model.F(f, []float64{1}, 1)
	p.Model.FJac(j, []float64{1}, 1)
	if !near(f[0], r/math.E, 0, 1e-15) || j[0] != 0 {
		t.Fatalf("F(1) = %v, F'(1) = %v; want %v, 0", f[0], j[0], r/math.E)
	}
	fw := make([]float64, 1)
	p.Model.FW(fw, []float64{2.5}, []float64{0.4}, 1)
	p.Model.F(f, []float64{2.5}, 1)
	if !near(fw[0], f[0]*math.Exp(0.4), 0, 1e-14) {
		t.Fatalf("FW = %v, F e^0.4 = %v", fw[0], f[0]*math.Exp(0.4))
	}
	if p.Traits.AdditiveNoise || p.Model.Additive() || p.Model.Nw != 1 || p.Model.Q[0] != 0.09 {
		t.Fatalf("traits %+v Nw %d Q %v", p.Traits, p.Model.Nw, p.Model.Q)
	}
	for _, cfg := range []RickerConfig{{LogR: 25}, {SigmaE: -1}, {R: math.NaN()}, {Steps: -1}} {
		if _, err := NewRicker(cfg); err == nil {
			t.Errorf("NewRicker(%+v) gave no error", cfg)
		}
	}
}
