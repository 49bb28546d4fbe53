package filters_test

import (
	"math"
	"testing"

	"github.com/estbench/estbench/filters"
)

// ctRangeBearing is the nearly coordinated turn model of Bar-Shalom, Li &
// Kirubarajan 2001, "Estimation with Applications to Tracking and
// Navigation", §11.7 (from memory): state [px, vx, py, vy, ω], sample time
// T = 1 s, with s = sin ωT, c = cos ωT,
//
//	px' = px + (s/ω) vx − ((1−c)/ω) vy    vx' = c vx − s vy
//	py' = py + ((1−c)/ω) vx + (s/ω) vy    vy' = s vx + c vy    ω' = ω
//
// DWNA process noise (q = 1 m²/s⁴) on each position/velocity pair, turn
// rate noise variance 1e-4 (rad/s)² per step, and range and bearing from a
// sensor at the origin with σr = 5 m and σb = 0.2°. The scenario (a shore
// radar following a harbour launch) is our own. Analytic Jacobians are set;
// tests clear them to exercise differencing.
func ctRangeBearing() *filters.Model {
	const T = 1.0
	const q, qw = 1.0, 1e-4
	sb := 0.2 * math.Pi / 180
	m := &filters.Model{
		Nx: 5, Nz: 2,
		F:    ctF,
		H:    rbH,
		FJac: ctFJac,
		HJac: rbHJac,
		Q: []float64{
			q * T * T * T * T / 4, q * T * T * T / 2, 0, 0, 0,
			q * T * T * T / 2, q * T * T, 0, 0, 0,
			0, 0, q * T * T * T * T / 4, q * T * T * T / 2, 0,
			0, 0, q * T * T * T / 2, q * T * T, 0,
			0, 0, 0, 0, qw,
		},
		R:         []float64{25, 0, 0, sb * sb},
		AngleMeas: []int{1},
	}
	return m
}

// ctCoef returns s/ω, (1−c)/ω and their derivatives in ω for T = 1, with
// Taylor series for small |ω|.
func ctCoef(w float64) (s, c, a, b, da, db float64) {
	s, c = math.Sincos(w)
	if math.Abs(w) < 1e-4 {
		w2 := w * w
		a = 1 - w2/6
		b = w / 2 * (1 - w2/12)
		da = -w / 3
		db = 0.5 - w2/8
		return
	}
	a = s / w
	b = (1 - c) / w
	da = (c*w - s) / (w * w)
	db = (s*w - (1 - c)) / (w * w)
	return
}

func ctF(dst, x []float64, _ int) {
	s, c, a, b, _, _ := ctCoef(x[4])
	vx, vy := x[1], x[3]
	dst[0] = x[0] + a*vx - b*vy
	dst[1] = c*vx - s*vy
	dst[2] = x[2] + b*vx + a*vy
	dst[3] = s*vx + c*vy
	dst[4] = x[4]
}

func ctFJac(dst, x []float64, _ int) {
	s, c, a, b, da, db := ctCoef(x[4])
	vx, vy := x[1], x[3]
	copy(dst, []float64{
		1, a, 0, -b, da*vx - db*vy,
		0, c, 0, -s, -s*vx - c*vy,
		0, b, 1, a, db*vx + da*vy,
		0, s, 0, c, c*vx - s*vy,
		0, 0, 0, 0, 1,
	})
}

func rbH(dst, x []float64, _ int) {
	dst[0] = math.Hypot(x[0], x[2])
	dst[1] = math.Atan2(x[2], x[0])
}

func rbHJac(dst, x []float64, _ int) {
	px, py := x[0], x[2]
	r2 := px*px + py*py
	r := math.Sqrt(r2)
	for i := range dst[:10] {
		dst[i] = 0
	}
	dst[0] = px / r
	dst[2] = py / r
	dst[5] = -py / r2
	dst[7] = px / r2
}

// ctPrior is a prior for ctRangeBearing: a launch about 2.2 km out heading
// roughly south-east and turning gently.
func ctPrior() (x0, p0 []float64) {
	x0 = []float64{1000, 5, 2000, -3, 0.02}
	p0 = []float64{
		100, 0, 0, 0, 0,
		0, 4, 0, 0, 0,
		0, 0, 100, 0, 0,
		0, 0, 0, 4, 0,
		0, 0, 0, 0, 1e-4,
	}
	return x0, p0
}

// westTarget returns a prior for ctRangeBearing: a target at rest 1 km
// out at bearing −179° (just south of due west), position sd 10 m, so
// sigma points straddle the ±π bearing cut; and a measurement of it at
// bearing +179°.
func westTarget() (x0, p0, z []float64) {
	b := -179 * math.Pi / 180
	x0 = []float64{1000 * math.Cos(b), 0, 1000 * math.Sin(b), 0, 0}
	p0 = []float64{
		100, 0, 0, 0, 0,
		0, 1e-2, 0, 0, 0,
		0, 0, 100, 0, 0,
		0, 0, 0, 1e-2, 0,
		0, 0, 0, 0, 1e-8,
	}
	return x0, p0, []float64{1000, 179 * math.Pi / 180}
}

// checkWestInnovation runs one step of f on westTarget and checks that the
// bearing innovation is about −2° (wrapped), not 358°, to within tol
// radians, and that the estimate moved north (the short way round).
func checkWestInnovation(t *testing.T, f filters.Filter, tol float64) {
	t.Helper()
	x0, p0, z := westTarget()
	if err := f.Reset(x0, p0, nil); err != nil {
		t.Fatal(err)
	}
	if err := f.Predict(1); err != nil {
		t.Fatal(err)
	}
	if err := f.Update(z, 1); err != nil {
		t.Fatal(err)
	}
	nu := make([]float64, 2)
	if !f.(filters.Innovator).InnovationTo(nu, nil) {
		t.Fatal("no innovation")
	}
	want := -2 * math.Pi / 180
	if math.Abs(nu[1]-want) > tol {
		t.Errorf("bearing innovation %.6g rad (%.4g°), want %.6g rad (-2°) within %g", nu[1], nu[1]*180/math.Pi, want, tol)
	}
	x := make([]float64, 5)
	f.EstimateTo(x, nil)
	if !(x[2] > x0[2]) {
		t.Errorf("py went from %.4g to %.4g: the update did not move the short way round", x0[2], x[2])
	}
}
