package datasets

import (
	"math"
	"testing"
)

// Every simulated reading lies on the grid ΔZ (the definition of a
// quantiser), for the default step and for a step that is not a power of
// two, where z/Δ is rounded before the comparison.
func TestQuantisedOnGrid(t *testing.T) {
	for _, step := range []float64{1, 0.1, 0.37} {
		p, err := NewQuantised(QuantisedConfig{Step: step})
		if err != nil {
			t.Fatal(err)
		}
		var seq Sequence
		rng := newRNG(91, 92)
		for r := 0; r < 20; r++ {
			p.Run(&seq, rng)
			for k := 1; k <= seq.Steps; k++ {
				z := seq.Meas(k)[0]
				if j := math.Round(z / step); z != step*j {
					t.Fatalf("step %v: reading %v is not on the grid (nearest %v)", step, z, step*j)
				}
				if h := seq.State(k)[0]; math.Abs(z-h) > step/2+6*0.2 {
					t.Fatalf("reading %v too far from altitude %v", z, h)
				}
			}
		}
	}
}

// Exact cell probabilities of a quantised Gaussian reading (closed form):
// P(z = jΔ | h) = Φ((jΔ + Δ/2 - h)/σ) - Φ((jΔ - Δ/2 - h)/σ). The
// probabilities from MeasLogLik sum to 1 over the grid, agree with the
// formula written with math.Erf at hand-picked points (h = 50.3: the cell
// z = 50 has Φ(1) - Φ(-4) = 0.841313, z = 51 has Φ(6) - Φ(1) = 0.158655,
// z = 49 has Φ(-4) - Φ(-9) = 3.1671e-5, from normal tables), and match the frequencies of HV with N(0, σ²) noise
// within 5 standard errors (binomial; 5σ rule: common practice with no
// source).
func TestQuantisedCellProbabilities(t *testing.T) {
	p, err := NewQuantised(QuantisedConfig{})
	if err != nil {
		t.Fatal(err)
	}
	m := &p.Model
	const h = 50.3
	x := []float64{h, 0}
	prob := func(z float64) float64 { return math.Exp(m.MeasLogLik([]float64{z}, x, 1)) }
	var sum float64
	for j := 40; j <= 60; j++ {
		sum += prob(float64(j))
	}
	if !near(sum, 1, 1e-14, 0) {
		t.Errorf("cell probabilities sum to %v", sum)
	}
	if !near(prob(50), 0.841313, 1e-6, 0) || !near(prob(51), 0.158655, 1e-6, 0) || !near(prob(49), 3.1671e-5, 1e-9, 0) {
		t.Errorf("P(50) = %v, P(51) = %v, P(49) = %v", prob(50), prob(51), prob(49))
	}
	// Far cells keep relative accuracy (the tails are computed with erfc):
	// the cell z = 53 lies 11σ to 16σ away, Φ(-11) - Φ(-16) = 1.9e-28.
	want := (math.Erfc(11/math.Sqrt2) - math.Erfc(16/math.Sqrt2)) / 2
	if got := prob(53); !near(got, want, 0, 1e-9) || !near(want, 1.9e-28, 0, 0.05) {
		t.Errorf("P(53) = %v, want %v", got, want)
	}
	rng := newRNG(93, 94)
	counts := map[float64]int{}
	const n = 100000
	z := make([]float64, 1)
	for i := 0; i < n; i++ {
		m.HV(z, x, []float64{0.2 * rng.NormFloat64()}, 1)
		counts[z[0]]++
	}
	for c, k := range counts {
		q := prob(c)
		if se := math.Sqrt(q * (1 - q) / n); math.Abs(float64(k)/n-q) > 5*se+1e-12 {
			t.Errorf("cell %v: frequency %v, probability %v", c, float64(k)/n, q)
		}
	}
	// The staircase H = HV(·, 0) and the traits that follow from it.
	m.H(z, []float64{50.49, 3}, 1)
	if z[0] != 50 {
		t.Errorf("H(50.49) = %v", z[0])
	}
	m.H(z, []float64{50.5, 3}, 1)
	if z[0] != 51 {
		t.Errorf("H(50.5) = %v (halves round up)", z[0])
	}
	if p.Traits.Differentiable || p.Traits.AdditiveNoise || p.Traits.NonDifferentiable != "has a staircase measurement (quantised to 1 m)" {
		t.Errorf("traits %+v", p.Traits)
	}
	for _, cfg := range []QuantisedConfig{{Step: -1}, {Sigma: math.NaN()}, {Q: -1}, {Dt: math.Inf(1)}, {Steps: -1}} {
		if _, err := NewQuantised(cfg); err == nil {
			t.Errorf("NewQuantised(%+v) gave no error", cfg)
		}
	}
}
