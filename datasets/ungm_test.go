package datasets

import (
	"math"
	"testing"
)

// Values of the model equations of Gordon, Salmond & Smith 1993 (IEE Proc. F
// 140(2)) in the form of NewUNGM's comment, at points computed by hand:
// drift x/2 + 25x/(1+x²) is 0, 13, 11 and -9 at x = 0, 1, 2, -3; the forcing
// 8 cos(1.2 k) uses cos 1.2 = 0.36235775447667357 and cos 6 = 0.9601702866503661
// (values of the cosine from standard tables).
func TestUNGMValues(t *testing.T) {
	p, err := NewUNGM(UNGMConfig{})
	if err != nil {
		t.Fatal(err)
	}
	m := &p.Model
	for _, tc := range []struct {
		x    float64
		k    int
		want float64
	}{
		{0, 1, 8 * 0.36235775447667357},
		{1, 1, 13 + 8*0.36235775447667357},
		{2, 5, 11 + 8*0.9601702866503661},
		{-3, 5, -9 + 8*0.9601702866503661},
	} {
		var got [1]float64
		m.F(got[:], []float64{tc.x}, tc.k)
		if !near(got[0], tc.want, 0, 1e-14) {
			t.Errorf("F(%v, k=%d) = %v, want %v", tc.x, tc.k, got[0], tc.want)
		}
	}
	for _, tc := range [][2]float64{{0, 0}, {10, 5}, {-3, 0.45}, {2, 0.2}} {
		var got [1]float64
		m.H(got[:], []float64{tc[0]}, 1)
		if !near(got[0], tc[1], 0, 1e-15) {
			t.Errorf("H(%v) = %v, want %v", tc[0], got[0], tc[1])
		}
	}
	// dF/dx = 1/2 + 25(1 - x²)/(1 + x²)² by hand: 25.5 at 0, 0.5 at ±1,
	// -2.5 at 2; dH/dx = x/10.
	for _, tc := range [][3]float64{{0, 25.5, 0}, {1, 0.5, 0.1}, {-1, 0.5, -0.1}, {2, -2.5, 0.2}} {
		var fj, hj [1]float64
		m.FJac(fj[:], []float64{tc[0]}, 3)
		m.HJac(hj[:], []float64{tc[0]}, 3)
		if !near(fj[0], tc[1], 1e-15, 1e-15) || !near(hj[0], tc[2], 0, 1e-15) {
			t.Errorf("Jacobians at %v = %v, %v; want %v, %v", tc[0], fj[0], hj[0], tc[1], tc[2])
		}
	}
	if p.Model.Q[0] != 10 || p.Model.R[0] != 1 || p.P0[0] != 5 || p.X0[0] != 0 || p.Steps != 100 || p.Dt != 1 {
		t.Fatalf("defaults: Q %v R %v P0 %v X0 %v steps %d dt %v", p.Model.Q, p.Model.R, p.P0, p.X0, p.Steps, p.Dt)
	}
	if p.Model.Linear || p.Traits.Linear || !p.Traits.Differentiable {
		t.Fatalf("traits %+v", p.Traits)
	}
}

// Derivative check (derivable property): the analytic Jacobians agree with
// central differences, whose error here is below 1e-7.
func TestUNGMJacobians(t *testing.T) {
	p, _ := NewUNGM(UNGMConfig{})
	m := &p.Model
	for _, x := range []float64{-20, -3.3, -1, -0.2, 0, 0.4, 1.5, 7, 30} {
		for _, k := range []int{1, 8} {
			xs := []float64{x}
			var fj, hj [1]float64
			m.FJac(fj[:], xs, k)
			m.HJac(hj[:], xs, k)
			nf := centralJac(m.F, xs, 1, k)
			nh := centralJac(m.H, xs, 1, k)
			if !near(fj[0], nf[0], 1e-7, 1e-7) || !near(hj[0], nh[0], 1e-7, 1e-7) {
				t.Errorf("x=%v k=%d: analytic %v %v, differences %v %v", x, k, fj[0], hj[0], nf[0], nh[0])
			}
		}
	}
}

func TestUNGMConfigErrors(t *testing.T) {
	for _, cfg := range []UNGMConfig{{Q: -1}, {R: -2}, {P0: -5}, {Steps: -3}, {Q: math.Inf(1)}, {R: math.NaN()}} {
		if _, err := NewUNGM(cfg); err == nil {
			t.Errorf("NewUNGM(%+v) gave no error", cfg)
		}
	}
	p, err := NewUNGM(UNGMConfig{Q: 1, R: 10, Steps: 50})
	if err != nil || p.Model.Q[0] != 1 || p.Model.R[0] != 10 || p.Steps != 50 {
		t.Fatalf("explicit config not used: %v %+v", err, p)
	}
}
