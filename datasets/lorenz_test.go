package datasets

import (
	"bufio"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"
)

// readLorenzReference reads testdata/lorenz_reference.csv (written by
// testdata/gen_lorenz_reference.py with Debian's python3-scipy 1.10.1:
// solve_ivp, DOP853, rtol = atol = 1e-13) and returns the states of the
// named system at t = 0, 0.05, 0.1, ...
func readLorenzReference(t *testing.T, system string) [][]float64 {
	t.Helper()
	f, err := os.Open("testdata/lorenz_reference.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var rows [][]float64
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		line := sc.Text()
		if strings.HasPrefix(line, "#") {
			continue
		}
		fields := strings.Split(line, ",")
		if fields[0] != system {
			continue
		}
		tv, err := strconv.ParseFloat(fields[1], 64)
		if err != nil || !near(tv, 0.05*float64(len(rows)), 1e-12, 0) {
			t.Fatalf("bad time %q in row %d", fields[1], len(rows))
		}
		row := make([]float64, len(fields)-2)
		for i, s := range fields[2:] {
			if row[i], err = strconv.ParseFloat(s, 64); err != nil {
				t.Fatal(err)
			}
		}
		rows = append(rows, row)
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	if len(rows) < 2 {
		t.Fatalf("no rows for %s", system)
	}
	return rows
}

// maxRefError integrates from the reference's first state with the given
// flow, one output interval (0.05) per step, and returns the largest
// absolute difference from the reference.
func maxRefError(fl *flow, ref [][]float64) float64 {
	x := append([]float64(nil), ref[0]...)
	var worst float64
	for _, want := range ref[1:] {
		fl.step(x, x)
		for i := range x {
			worst = math.Max(worst, math.Abs(x[i]-want[i]))
		}
	}
	return worst
}

// Reference trajectory of Lorenz 1963 (J. Atmos. Sci. 20(2)) with σ = 10,
// ρ = 28, β = 8/3 from (1, 1, 1) over 3 time units, from scipy 1.10.1's
// solve_ivp at tolerance 1e-13 (testdata/gen_lorenz_reference.py). The
// classical Runge–Kutta method is of order four (Butcher 2008, "Numerical
// Methods for Ordinary Differential Equations"): halving the step cuts
// the error by a factor near 2⁴ = 16 (accepted in [12, 20]), and at a step
// of 0.05/40 = 0.00125 the trajectory is within 1e-6 of the reference
// (observed 1.8e-7). The problem's own transition, five steps of 0.01 per
// 0.05, stays within 2e-3 of the reference over the 3 time units
// (observed 7.2e-4, most of it grown by the chaos from early local errors).
func TestLorenz63MatchesScipy(t *testing.T) {
	ref := readLorenzReference(t, "lorenz63")
	field, _ := lorenz63Field(10, 28, 8.0/3)
	e1 := maxRefError(newFlow(3, 5, 0.01, field, nil), ref)
	e2 := maxRefError(newFlow(3, 10, 0.005, field, nil), ref)
	if r := e1 / e2; r < 12 || r > 20 {
		t.Errorf("error ratio for halved step = %v (errors %v, %v), want about 16", r, e1, e2)
	}
	if e := maxRefError(newFlow(3, 40, 0.00125, field, nil), ref); e > 1e-6 {
		t.Errorf("RK4 with step 0.00125 is %v from the reference", e)
	}
	p, err := NewLorenz63(Lorenz63Config{})
	if err != nil {
		t.Fatal(err)
	}
	x, next := append([]float64(nil), ref[0]...), make([]float64, 3)
	for k, want := range ref[1:] {
		p.Model.F(next, x, k+1)
		copy(x, next)
		for i := range x {
			if !near(x[i], want[i], 2e-3, 0) {
				t.Fatalf("step %d: F gives %v, reference %v", k+1, x, want)
			}
		}
	}
}

// Reference trajectory of Lorenz 1996 (N = 40, F = 8) over 1 time unit from
// x_i = 8 + sin(i), from the same script. The order-four check as above
// with one and two RK4 steps per 0.05 (ratio accepted in [12, 20]), and
// within 1e-5 of the reference at 32 steps per 0.05 (observed 2.2e-6). The
// start is off the attractor, where the flow is fast: there the problem's
// single step of 0.05 is 1.8 off after 1 time unit, a property of the
// scheme, not checked.
func TestLorenz96MatchesScipy(t *testing.T) {
	ref := readLorenzReference(t, "lorenz96")
	if len(ref[0]) != 40 {
		t.Fatalf("reference has %d variables", len(ref[0]))
	}
	field, _ := lorenz96Field(40, 8)
	e1 := maxRefError(newFlow(40, 1, 0.05, field, nil), ref)
	e2 := maxRefError(newFlow(40, 2, 0.025, field, nil), ref)
	if r := e1 / e2; r < 12 || r > 20 {
		t.Errorf("error ratio for halved step = %v (errors %v, %v), want about 16", r, e1, e2)
	}
	if e := maxRefError(newFlow(40, 32, 0.05/32, field, nil), ref); e > 1e-5 {
		t.Errorf("RK4 with step 0.05/32 is %v from the reference", e)
	}
}

// Dissipation of Lorenz 1963 (derived from the equations; the trapping
// region argument is in Sparrow 1982, "The Lorenz Equations", Appendix C):
// V = x² + y² + (z - σ - ρ)² has dV/dt = -2(σx² + y² + βz² - β(σ+ρ)z),
// negative outside an ellipsoid whose farthest point from (0, 0, σ+ρ) is at
// distance √1540.3 = 39.25 for the classic parameters (by hand, Lagrange
// multiplier: the maximum of y² + (z-38)² on y² + (8/3)(z-19)² = 962.67 is
// at z = 7.6). A noise-free trajectory started inside the sphere of radius
// 39.25 stays inside it. Its box (over 200 time units) is that of the
// well-known attractor: |x| < 20, |y| < 28, 0 < z < 50 (values from memory;
// Sparrow 1982 figures).
func TestLorenz63StaysInTrappingSphere(t *testing.T) {
	p, _ := NewLorenz63(Lorenz63Config{})
	field, _ := lorenz63Field(10, 28, 8.0/3)
	fl := newFlow(3, 1, 0.01, field, nil)
	x := append([]float64(nil), p.X0...)
	const r2 = 1540.3
	var maxX, maxY, minZ, maxZ = 0.0, 0.0, math.Inf(1), 0.0
	// Time averages for the identities below.
	var sx, sy, sz, sxy, sxx, szz, sxyz float64
	n := 0
	for k := 0; k < 20000; k++ {
		fl.step(x, x)
		if v := x[0]*x[0] + x[1]*x[1] + (x[2]-38)*(x[2]-38); v > r2 {
			t.Fatalf("step %d: x = %v outside the trapping sphere (V = %v)", k, x, v)
		}
		maxX, maxY = math.Max(maxX, math.Abs(x[0])), math.Max(maxY, math.Abs(x[1]))
		minZ, maxZ = math.Min(minZ, x[2]), math.Max(maxZ, x[2])
		sx += x[0]
		sy += x[1]
		sz += x[2]
		sxy += x[0] * x[1]
		sxx += x[0] * x[0]
		szz += x[2] * x[2]
		sxyz += x[0] * x[1] * x[2]
		n++
	}
	if maxX >= 20 || maxY >= 28 || minZ <= 0 || maxZ >= 50 {
		t.Errorf("trajectory box |x| ≤ %v, |y| ≤ %v, %v ≤ z ≤ %v", maxX, maxY, minZ, maxZ)
	}
	// Long-time averages of d/dt of x, z, x²/2 and z²/2 vanish on a bounded
	// trajectory, which gives (from the equations) <y> = <x>, <xy> = β<z>,
	// <xy> = <x²> and <xyz> = β<z²>. Over 200 time units these hold to a
	// few parts in a thousand of the terms' size (the end-point terms are
	// at most 2·50²/200 = 25 against averages of order 100 to 600; a
	// relative 3% is accepted).
	N := float64(n)
	b := 8.0 / 3
	for _, c := range []struct {
		what      string
		got, want float64
	}{
		{"<xy> = β<z>", sxy / N, b * sz / N},
		{"<xy> = <x²>", sxy / N, sxx / N},
		{"<xyz> = β<z²>", sxyz / N, b * szz / N},
	} {
		if !near(c.got, c.want, 0, 0.03) {
			t.Errorf("%s: %v vs %v", c.what, c.got, c.want)
		}
	}
	if math.Abs(sx-sy)/N > 0.1 {
		t.Errorf("<x> = %v, <y> = %v", sx/N, sy/N)
	}
}

// Energy of Lorenz 1996 (Lorenz 1996; Lorenz & Emanuel 1998): the advection
// term conserves E = ½ Σ x_i², so dE/dt = -Σ x_i² + F Σ x_i, negative
// whenever |x| > F √N (Cauchy–Schwarz). Started inside that ball, a
// noise-free trajectory stays in it: Σ x_i² ≤ N F² = 2560. The long-time
// average of dE/dt vanishes, so <Σ x_i²> = F <Σ x_i> (within 2% over 500
// time units, the end-point term being at most 2560/500 ≈ 5 against
// averages near 600).
func TestLorenz96EnergyBounded(t *testing.T) {
	p, _ := NewLorenz96(Lorenz96Config{})
	field, _ := lorenz96Field(40, 8)
	fl := newFlow(40, 1, 0.05, field, nil)
	x := append([]float64(nil), p.X0...)
	var se, ss float64
	const steps = 10000
	for k := 0; k < steps; k++ {
		fl.step(x, x)
		var e, s float64
		for _, v := range x {
			e += v * v
			s += v
		}
		if e > 40*64 {
			t.Fatalf("step %d: Σx² = %v above N F² = 2560", k, e)
		}
		se += e
		ss += s
	}
	if !near(se/steps, 8*ss/steps, 0, 0.02) {
		t.Errorf("<Σx²> = %v, F<Σx> = %v", se/steps, 8*ss/steps)
	}
	// Climatology (Lorenz & Emanuel 1998, from memory: mean about 2.3,
	// standard deviation about 3.6 for F = 8).
	mean := ss / steps / 40
	sd := math.Sqrt(se/steps/40 - mean*mean)
	if !near(mean, 2.3, 0.2, 0) || !near(sd, 3.6, 0.2, 0) {
		t.Errorf("climatology mean %v, sd %v; want about 2.3 and 3.6", mean, sd)
	}
}

// The observation operators (as documented in NewLorenz63 and NewLorenz96).
func TestLorenzObservations(t *testing.T) {
	x := []float64{1.5, -2.5, 30}
	for _, tc := range []struct {
		observe string
		want    []float64
	}{{"", []float64{1.5}}, {"x", []float64{1.5}}, {"xz", []float64{1.5, 30}}, {"xyz", []float64{1.5, -2.5, 30}}} {
		p, err := NewLorenz63(Lorenz63Config{Observe: tc.observe})
		if err != nil {
			t.Fatal(err)
		}
		z := make([]float64, p.Model.Nz)
		p.Model.H(z, x, 1)
		if !sameBits(z, tc.want) || !sameBits(p.Model.R, scaledIdentity(len(tc.want), 2)) {
			t.Errorf("observe %q: H = %v, R = %v", tc.observe, z, p.Model.R)
		}
	}
	if _, err := NewLorenz63(Lorenz63Config{Observe: "y"}); err == nil {
		t.Error("observe y accepted")
	}
	if _, err := NewLorenz63(Lorenz63Config{Dt: 0.05, RKStep: 0.02}); err == nil {
		t.Error("RKStep that does not divide Dt accepted")
	}
	p, _ := NewLorenz96(Lorenz96Config{})
	if p.Model.Nx != 40 || p.Model.Nz != 20 || len(p.Scored) != 40 {
		t.Fatalf("lorenz96 dims %d, %d, scored %d", p.Model.Nx, p.Model.Nz, len(p.Scored))
	}
	x96 := make([]float64, 40)
	for i := range x96 {
		x96[i] = float64(i)
	}
	z := make([]float64, 20)
	p.Model.H(z, x96, 1)
	for i, v := range z {
		if v != float64(2*i) {
			t.Fatalf("z[%d] = %v, want x_%d", i, v, 2*i)
		}
	}
}
