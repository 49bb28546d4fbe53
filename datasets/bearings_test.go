package datasets

import (
	"math"
	"testing"
)

// Gordon, Salmond & Smith 1993 §4 (from memory): the target starts at the
// published (-0.05, 0.001, 0.7, -0.055) in every run; the noise-free
// constant-velocity course is x_k = -0.05 + 0.001 k, y_k = 0.7 - 0.055 k,
// so its bearing from the origin is atan2(0.7 - 0.055 k, -0.05 + 0.001 k),
// which swings from about 94° through ±180° as the target passes below
// the observer's x axis near step 13; by hand at k = 10: atan2(0.15,
// -0.04) = 1.8313 rad.
func TestBearingsPublishedCourse(t *testing.T) {
	p, err := NewBearings(BearingsConfig{})
	if err != nil {
		t.Fatal(err)
	}
	m := &p.Model
	x, next := append([]float64(nil), bearingsStart[:]...), make([]float64, 4)
	z := make([]float64, 1)
	for k := 1; k <= p.Steps; k++ {
		m.F(next, x, k)
		copy(x, next)
		px, py := -0.05+0.001*float64(k), 0.7-0.055*float64(k)
		if !near(x[0], px, 1e-15, 1e-13) || !near(x[2], py, 1e-15, 1e-13) {
			t.Fatalf("step %d: position (%v, %v), want (%v, %v)", k, x[0], x[2], px, py)
		}
		m.H(z, x, k)
		if d := wrapPi(z[0] - math.Atan2(py, px)); math.Abs(d) > 1e-12 {
			t.Fatalf("step %d: bearing %v, want %v", k, z[0], math.Atan2(py, px))
		}
		if k == 10 && !near(z[0], 1.8313, 1e-4, 0) {
			t.Fatalf("bearing at step 10 = %v, want 1.8313", z[0])
		}
	}
	var seq Sequence
	rng := newRNG(5, 5)
	for r := 0; r < 3; r++ {
		p.Run(&seq, rng)
		if !sameBits(seq.X0, bearingsStart[:]) {
			t.Fatalf("published start: x0 = %v", seq.X0)
		}
		for k := 1; k <= seq.Steps; k++ {
			if b := seq.Meas(k)[0]; !(b > -math.Pi && b <= math.Pi) {
				t.Fatalf("bearing %v outside (-π, π]", b)
			}
		}
	}
	q, _ := NewBearings(BearingsConfig{DrawStart: true})
	q.Run(&seq, rng)
	if sameBits(seq.X0, bearingsStart[:]) {
		t.Fatal("DrawStart kept the published start")
	}
}

// Bar-Shalom, Li & Kirubarajan 2001 §6.3.2 with T = 1: Q = σ_q² Γ Γᵀ per
// axis with Γ = [1/2, 1]ᵀ; R = σ_θ²; the prior of Gordon et al. 1993.
func TestBearingsNoise(t *testing.T) {
	p, _ := NewBearings(BearingsConfig{SigmaQ: 0.002, SigmaTheta: 0.01})
	s2 := 0.002 * 0.002
	g := []float64{0.5, 1}
	for i := 0; i < 4; i++ {
		for j := 0; j < 4; j++ {
			want := 0.0
			if i/2 == j/2 {
				want = s2 * g[i%2] * g[j%2]
			}
			if !near(p.Model.Q[i*4+j], want, 0, 1e-15) {
				t.Fatalf("Q[%d,%d] = %v, want %v", i, j, p.Model.Q[i*4+j], want)
			}
		}
	}
	if !near(p.Model.R[0], 1e-4, 0, 1e-15) {
		t.Fatalf("R = %v", p.Model.R)
	}
	d, _ := NewBearings(BearingsConfig{})
	if !sameBits(d.X0, []float64{0, 0, 0.4, -0.05}) || !sameBits(d.P0, diag(0.25, 0.005*0.005, 0.09, 0.0001)) || d.Steps != 24 {
		t.Fatalf("prior %v %v steps %d", d.X0, d.P0, d.Steps)
	}
	for _, cfg := range []BearingsConfig{{SigmaQ: -1}, {SigmaTheta: 4}, {Steps: -1}} {
		if _, err := NewBearings(cfg); err == nil {
			t.Errorf("NewBearings(%+v) gave no error", cfg)
		}
	}
}
