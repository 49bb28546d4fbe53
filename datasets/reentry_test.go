package datasets

import (
	"math"
	"testing"
)

func reentryAltitude(x []float64) float64 { return math.Hypot(x[0], x[1]) - reentryR0 }

// The altitude of the re-entering vehicle falls monotonically (Julier &
// Uhlmann 2004 §VI, Fig. of the trajectory, from memory): with no process
// noise, from the published initial state, it drops at every one of the
// 2000 steps from about 136 km to a few km above the ground, after the
// vehicle slows from about 7 km/s in the dense lower atmosphere. With the
// default process noise every run still falls by more than 100 km and stays
// above ground.
func TestReentryAltitudeFalls(t *testing.T) {
	p, err := NewReentry(ReentryConfig{})
	if err != nil {
		t.Fatal(err)
	}
	x, next := reentryStart[:], make([]float64, 5)
	x = append([]float64(nil), x...)
	alt0 := reentryAltitude(x)
	if !near(alt0, 135.77, 0.01, 0) {
		t.Fatalf("initial altitude %v km", alt0)
	}
	prev := alt0
	for k := 1; k <= p.Steps; k++ {
		p.Model.F(next, x, k)
		copy(x, next)
		a := reentryAltitude(x)
		if !(a < prev) {
			t.Fatalf("step %d: altitude %v km not below %v km", k, a, prev)
		}
		prev = a
	}
	if v := math.Hypot(x[2], x[3]); prev < 1 || prev > 40 || v > 1 {
		t.Errorf("after 200 s: altitude %v km, speed %v km/s", prev, v)
	}

	var seq Sequence
	rng := newRNG(41, 42)
	for r := 0; r < 10; r++ {
		p.Run(&seq, rng)
		for k := 1; k <= seq.Steps; k++ {
			x := seq.State(k)
			if a := reentryAltitude(x); a <= 0 || a > alt0+0.01 {
				t.Fatalf("run %d step %d: altitude %v km", r, k, a)
			}
			if x[4] != reentryTrue5 {
				t.Fatalf("run %d step %d: true x5 = %v, want %v with no noise", r, k, x[4], reentryTrue5)
			}
		}
		if a := reentryAltitude(seq.State(seq.Steps)); a > alt0-100 {
			t.Errorf("run %d: final altitude %v km", r, a)
		}
	}
}

// Newton's law of gravitation and the drag law of Athans et al. 1968 at the
// start: gravity -Gm0 x/R³ has size Gm0/R² = 3.9860e5/6509.77² =
// 9.406e-3 km/s² (by hand), and the drag β0 e^{x5} exp((R0 - R)/H0) V v,
// with the air density factor exp(-135.77/13.406) = 3.99e-5, has size
// 0.59783 · 2 · 3.99e-5 · 7.034² = 2.36e-3 km/s² (by hand), a quarter of
// gravity, growing fast as the vehicle descends.
func TestReentryField(t *testing.T) {
	x := append([]float64(nil), reentryStart[:]...)
	d := make([]float64, 5)
	reentryField(d, x)
	r := math.Hypot(x[0], x[1])
	v := math.Hypot(x[2], x[3])
	drag := reentryBeta0 * math.Exp(x[4]) * math.Exp((reentryR0-r)/reentryH0) * v
	g := reentryGm0 / (r * r)
	if !near(g, 9.406e-3, 0, 1e-3) {
		t.Fatalf("gravity %v km/s²", g)
	}
	for i, want := range []float64{x[2], x[3], drag*x[2] - g*x[0]/r, drag*x[3] - g*x[1]/r, 0} {
		if !near(d[i], want, 1e-15, 1e-12) {
			t.Errorf("field[%d] = %v, want %v", i, d[i], want)
		}
	}
	if a := math.Hypot(drag*x[2], drag*x[3]); !near(a, 2.3e-3, 0, 0.05) {
		t.Errorf("drag deceleration %v km/s²", a)
	}
}

// The set-up of Julier & Uhlmann 2004 §VI (from memory): radar at (R0, 0);
// prior mean equal to the true start except x5 = 0; P0 with unit variance on
// x5; true x5 = 0.6932 (β = 2β0); filters' Q carries q5 = 1e-6 while the
// truth has none.
func TestReentrySetUp(t *testing.T) {
	p, err := NewReentry(ReentryConfig{})
	if err != nil {
		t.Fatal(err)
	}
	if p.X0[4] != 0 || p.P0[24] != 1 || p.Model.Q[24] != 1e-6 || p.Model.Q[12] != 2.4064e-5 || p.Model.Q[0] != 0 {
		t.Fatalf("prior %v, Q %v", p.X0, p.Model.Q)
	}
	if !near(math.Exp(reentryTrue5), 2, 0, 1e-4) {
		t.Fatal("true x5 does not double β")
	}
	z := make([]float64, 2)
	p.Model.H(z, []float64{reentryR0 + 3, 4, 0, 0, 0}, 1) // 3-4-5 triangle
	if !near(z[0], 5, 0, 1e-15) || !near(z[1], math.Atan2(4, 3), 0, 1e-15) {
		t.Fatalf("radar H = %v", z)
	}
	if p.Steps != 2000 || p.Dt != 0.1 || !near(p.Model.R[0], 1e-6, 0, 1e-12) || !near(p.Model.R[3], 17e-3*17e-3, 0, 1e-12) {
		t.Fatalf("steps %d dt %v R %v", p.Steps, p.Dt, p.Model.R)
	}
	for _, cfg := range []ReentryConfig{{Dt: -1}, {Substeps: -2}, {Q: math.NaN()}, {SigmaTheta: 4}, {Steps: -1}} {
		if _, err := NewReentry(cfg); err == nil {
			t.Errorf("NewReentry(%+v) gave no error", cfg)
		}
	}
}
