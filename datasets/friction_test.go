package datasets

import (
	"math"
	"testing"
)

// Closed form of the Euler recursion with no drive (derived by hand): while
// v > 0, v_k = v + T(-c v - a_c), a linear recursion with fixed point
// -a_c/c, so v_k = (v_0 + a_c/c)(1 - cT)^k - a_c/c, and
// s_k = s_0 + T Σ_{i<k} v_i. The cart coasting from 3 m/s with the
// defaults (c = 0.2 /s, a_c = 1 m/s², T = 0.1 s) stops after
// k* = ⌈ln(5/8)/ln(0.98)⌉ = 24 steps (by hand: (3 + 5) 0.98^k = 5).
func TestFrictionCoastingClosedForm(t *testing.T) {
	const T, c, ac = 0.1, 0.2, 1.0
	x, next := []float64{0, 3}, make([]float64, 2)
	var s float64
	stop := 0
	for k := 1; k <= 40 && stop == 0; k++ {
		s += T * x[1]
		frictionStep(next, x, 0, T, c, ac)
		copy(x, next)
		want := (3+ac/c)*math.Pow(1-c*T, float64(k)) - ac/c
		if want <= 0 {
			stop = k
			break
		}
		if !near(x[1], want, 1e-14, 1e-13) || !near(x[0], s, 1e-14, 1e-13) {
			t.Fatalf("step %d: %v, want v = %v, s = %v", k, x, want, s)
		}
	}
	if want := int(math.Ceil(math.Log(5.0/8) / math.Log(0.98))); stop != want || want != 24 {
		t.Fatalf("stopped at step %d, want %d (24)", stop, want)
	}
	if x[1] > 0 || x[1] < -T*(ac+c*0.2) {
		t.Fatalf("speed after stopping %v: should just cross zero", x[1])
	}
}

// The Coulomb law's discontinuity: across v = 0 the transition jumps by
// -2 T a_c in speed (friction opposes motion either way), while at v = 0
// itself no friction acts (sgn 0 = 0). The problem's traits say so in the
// words the ekf's note quotes.
func TestFrictionDiscontinuity(t *testing.T) {
	p, err := NewFriction(FrictionConfig{})
	if err != nil {
		t.Fatal(err)
	}
	m := &p.Model
	lo, hi, at := make([]float64, 2), make([]float64, 2), make([]float64, 2)
	const k = 37
	m.F(lo, []float64{5, -1e-12}, k)
	m.F(hi, []float64{5, 1e-12}, k)
	m.F(at, []float64{5, 0}, k)
	if jump := hi[1] - lo[1]; !near(jump, -2*0.1*1, 1e-11, 0) {
		t.Errorf("jump at v = 0: %v, want -0.2", jump)
	}
	u := 2 * math.Sin(2*math.Pi*0.1*k/20)
	if !near(at[1], 0.1*u, 0, 1e-15) {
		t.Errorf("F at v = 0: %v, want T u = %v", at[1], 0.1*u)
	}
	if p.Traits.Differentiable || p.Traits.NonDifferentiable != "is discontinuous at v=0" || !p.Traits.AdditiveNoise {
		t.Errorf("traits %+v", p.Traits)
	}
	// Away from v = 0 the Jacobian is that of the smooth part, checked
	// against central differences.
	for _, x := range [][]float64{{1, 0.5}, {-3, -2}, {0, 0.01}} {
		j := make([]float64, 4)
		m.FJac(j, x, k)
		d := centralJac(m.F, x, 2, k)
		for i := range j {
			if !near(j[i], d[i], 1e-8, 1e-8) {
				t.Errorf("x=%v: FJac %v, differences %v", x, j, d)
				break
			}
		}
	}
	for _, cfg := range []FrictionConfig{{Dt: -1}, {Coulomb: math.NaN()}, {DrivePeriod: -20}, {Steps: -1}} {
		if _, err := NewFriction(cfg); err == nil {
			t.Errorf("NewFriction(%+v) gave no error", cfg)
		}
	}
}

// The scenario's claim (NewFriction): the drive, stronger than the dry
// friction, makes the cart stop and start again; over the default 400
// steps every simulated run crosses v = 0 several times.
func TestFrictionStopsAndStarts(t *testing.T) {
	p, _ := NewFriction(FrictionConfig{})
	var seq Sequence
	rng := newRNG(95, 96)
	for r := 0; r < 10; r++ {
		p.Run(&seq, rng)
		cross := 0
		prev := seq.X0[1]
		var vmax float64
		for k := 1; k <= seq.Steps; k++ {
			v := seq.State(k)[1]
			if (v > 0) != (prev > 0) {
				cross++
			}
			vmax = math.Max(vmax, math.Abs(v))
			prev = v
		}
		if cross < 4 || vmax < 1 {
			t.Errorf("run %d: %d sign changes of v, max speed %v", r, cross, vmax)
		}
	}
}
