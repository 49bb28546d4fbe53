package datasets

import (
	"math"
	"testing"
)

// Closed form of the coordinated turn (Bar-Shalom, Li & Kirubarajan 2001,
// "Estimation with Applications to Tracking and Navigation", §11.7): with no
// noise and ω ≠ 0 the target keeps its speed v, its heading turns by ωT each
// step, and it stays on the circle of radius v/|ω| about
// c = (px - vy/ω, py + vx/ω); after k steps its position is c rotated by
// kωT about c.
func TestCTRBCircle(t *testing.T) {
	const dt = 1
	for _, w := range []float64{-3 * math.Pi / 180, 0.05, 0.2, -1.3} { // both sides of the series switch
		x := []float64{1000, 300, 1000, -40, w}
		cx, cy := x[0]-x[3]/w, x[2]+x[1]/w
		speed := math.Hypot(x[1], x[3])
		radius := speed / math.Abs(w)
		rx, ry := x[0]-cx, x[2]-cy
		next := make([]float64, 5)
		for k := 1; k <= 200; k++ {
			head := math.Atan2(x[3], x[1])
			ctMove(next, x, dt)
			copy(x, next)
			if x[4] != w {
				t.Fatalf("ω=%v: turn rate changed to %v", w, x[4])
			}
			if got := math.Hypot(x[1], x[3]); !near(got, speed, 0, 1e-12) {
				t.Fatalf("ω=%v step %d: speed %v, want %v", w, k, got, speed)
			}
			if got := math.Hypot(x[0]-cx, x[2]-cy); !near(got, radius, 0, 1e-10) {
				t.Fatalf("ω=%v step %d: distance from centre %v, want %v", w, k, got, radius)
			}
			if d := wrapPi(math.Atan2(x[3], x[1]) - head - w*dt); math.Abs(d) > 1e-12 {
				t.Fatalf("ω=%v step %d: heading change off by %v", w, k, d)
			}
			sk, ck := math.Sincos(float64(k) * w * dt)
			px, py := cx+ck*rx-sk*ry, cy+sk*rx+ck*ry
			if math.Hypot(x[0]-px, x[2]-py) > 1e-10*radius {
				t.Fatalf("ω=%v step %d: position (%v, %v), want (%v, %v)", w, k, x[0], x[2], px, py)
			}
		}
	}
}

// The same closed form through the simulator with the process noise set to
// zero (before the first Run, which factors Q).
func TestCTRBNoiseFreeSimulation(t *testing.T) {
	p, _ := NewCTRB(CTRBConfig{})
	for i := range p.Model.Q {
		p.Model.Q[i] = 0
	}
	var seq Sequence
	p.Run(&seq, newRNG(5, 6))
	x0 := seq.X0
	w := x0[4]
	cx, cy := x0[0]-x0[3]/w, x0[2]+x0[1]/w
	radius := math.Hypot(x0[1], x0[3]) / math.Abs(w)
	for k := 1; k <= seq.Steps; k++ {
		x := seq.State(k)
		if got := math.Hypot(x[0]-cx, x[2]-cy); !near(got, radius, 0, 1e-10) || x[4] != w {
			t.Fatalf("step %d: distance %v from centre, want %v; ω %v want %v", k, got, radius, x[4], w)
		}
	}
}

// Limit ω → 0 of the coordinated turn (Bar-Shalom et al. 2001 §11.7): the
// nearly constant velocity model, px_k = px + T vx, vx_k = vx.
func TestCTRBStraightLineLimit(t *testing.T) {
	const dt = 2
	x := []float64{-500, 30, 800, -12, 0}
	cv := []float64{-500 + dt*30, 30, 800 + dt*-12, -12, 0}
	got := make([]float64, 5)
	ctMove(got, x, dt)
	if !sameBits(got, cv) {
		t.Fatalf("ω = 0: %v, want %v", got, cv)
	}
	for _, w := range []float64{1e-12, -1e-12, 1e-300, 5e-324} {
		x[4] = w
		cv[4] = w
		ctMove(got, x, dt)
		for i := range got {
			if !near(got[i], cv[i], 1e-9, 1e-15) {
				t.Fatalf("ω = %v: component %d = %v, want %v", w, i, got[i], cv[i])
			}
		}
	}
}

// Continuity at the switch between series and closed form (derivable
// property): F and its Jacobian at |ωT| just below and at 0.1 differ only by
// rounding.
func TestCTRBSeriesSwitchContinuous(t *testing.T) {
	const dt = 1
	for _, sign := range []float64{1, -1} {
		lo := []float64{1000, 300, -200, 150, sign * math.Nextafter(ctSeries, 0)}
		hi := []float64{1000, 300, -200, 150, sign * ctSeries}
		fl, fh := make([]float64, 5), make([]float64, 5)
		ctMove(fl, lo, dt)
		ctMove(fh, hi, dt)
		for i := range fl {
			if !near(fl[i], fh[i], 1e-12, 1e-14) {
				t.Errorf("F[%d] jumps at the switch: %v vs %v", i, fl[i], fh[i])
			}
		}
		jl, jh := make([]float64, 25), make([]float64, 25)
		ctJac(jl, lo, dt)
		ctJac(jh, hi, dt)
		for i := range jl {
			if !near(jl[i], jh[i], 1e-12, 1e-13) {
				t.Errorf("FJac[%d] jumps at the switch: %v vs %v", i, jl[i], jh[i])
			}
		}
	}
}

// Derivative check (derivable property): analytic Jacobians of F and H agree
// with central differences at several states, including ω = 0, ω = 1e-12
// and turn rates on both sides of the series switch. Central differences of
// step 1e-6 max(1,|x|) carry rounding error up to ~1e-7 here.
func TestCTRBJacobians(t *testing.T) {
	p, _ := NewCTRB(CTRBConfig{Dt: 1.5})
	m := &p.Model
	for _, x := range [][]float64{
		{1000, 300, 1000, 0, -3 * math.Pi / 180},
		{1000, 300, 1000, 0, 1e-12},
		{-250, -40, 3000, 75, 0},
		{20, 5, -30, 8, 0.066},
		{20, 5, -30, 8, -0.0667},
		{-7000, 120, -20, -90, 0.4},
		{300, 10, 400, -10, -2},
	} {
		fj, hj := make([]float64, 25), make([]float64, 10)
		m.FJac(fj, x, 1)
		m.HJac(hj, x, 1)
		nf := centralJac(m.F, x, 5, 1)
		nh := centralJac(m.H, x, 2, 1)
		for i := range fj {
			if !near(fj[i], nf[i], 1e-6, 1e-6) {
				t.Errorf("x=%v: FJac[%d,%d] = %v, differences %v", x, i/5, i%5, fj[i], nf[i])
			}
		}
		for i := range hj {
			if !near(hj[i], nh[i], 1e-9, 1e-6) {
				t.Errorf("x=%v: HJac[%d,%d] = %v, differences %v", x, i/5, i%5, hj[i], nh[i])
			}
		}
	}
}

// Range and bearing (Bar-Shalom et al. 2001, polar measurement of a sensor at
// the origin): values at hand-computed points, bearings on both sides of the
// negative x axis (the ±π cut) and continuity of the Jacobian across it.
func TestCTRBRangeBearing(t *testing.T) {
	z := make([]float64, 2)
	for _, tc := range []struct{ px, py, r, b float64 }{
		{3, 4, 5, math.Atan2(4, 3)},
		{0, 10, 10, math.Pi / 2},
		{0, -10, 10, -math.Pi / 2},
		{-10, 0, 10, math.Pi},
		{-10, math.Copysign(0, -1), 10, math.Pi}, // atan2 gives -π here; (-π, π] wants π
		{-5, -5, 5 * math.Sqrt2, -3 * math.Pi / 4},
	} {
		rangeBearing(z, []float64{tc.px, 0, tc.py, 0, 0})
		if !near(z[0], tc.r, 0, 1e-15) || z[1] != tc.b {
			t.Errorf("(%v, %v): got %v, want [%v %v]", tc.px, tc.py, z, tc.r, tc.b)
		}
	}

	above, below := make([]float64, 2), make([]float64, 2)
	rangeBearing(above, []float64{-1000, 0, 1e-3, 0, 0})
	rangeBearing(below, []float64{-1000, 0, -1e-3, 0, 0})
	if !(above[1] > 3.14 && below[1] < -3.14) {
		t.Fatalf("bearings across the cut: %v, %v", above[1], below[1])
	}
	if d := wrapPi(above[1] - below[1]); !near(d, -2e-6, 0, 1e-9) {
		t.Fatalf("wrapped bearing difference across the cut %v, want -2e-6 (just above minus just below the cut)", d)
	}
	ja, jb := make([]float64, 10), make([]float64, 10)
	rangeBearingJac(ja, []float64{-1000, 0, 1e-3, 0, 0})
	rangeBearingJac(jb, []float64{-1000, 0, -1e-3, 0, 0})
	for i := range ja {
		if !near(ja[i], jb[i], 1e-5, 0) { // points 2 mm apart: entries (order 1 and 1e-3) change by ~2e-6
			t.Fatalf("HJac[%d] jumps across the cut: %v vs %v", i, ja[i], jb[i])
		}
	}
	rangeBearingJac(ja, []float64{0, 3, 0, 4, 0.1})
	for _, v := range ja {
		if v != 0 {
			t.Fatalf("HJac at the sensor = %v, want zeros", ja)
		}
	}
}

// Simulated bearings are reported in (-π, π] (NewCTRB's comment), also when
// the target crosses the negative x axis, where the noise-free bearing is
// near ±π.
func TestCTRBSimulatedBearingsWrapped(t *testing.T) {
	p, _ := NewCTRB(CTRBConfig{})
	p.X0 = []float64{-2000, 0, 0, 0, 0} // before the first Run
	var seq Sequence
	var pos, neg int
	rng := newRNG(41, 42)
	for r := 0; r < 5; r++ {
		p.Run(&seq, rng)
		for k := 1; k <= seq.Steps; k++ {
			b := seq.Meas(k)[1]
			if !(b > -math.Pi && b <= math.Pi) {
				t.Fatalf("bearing %v out of (-π, π]", b)
			}
			if b > 3 {
				pos++
			} else if b < -3 {
				neg++
			}
		}
	}
	if pos == 0 || neg == 0 {
		t.Fatalf("target did not straddle the cut (%d above, %d below)", pos, neg)
	}
}

// Defaults as documented (Arasaratnam & Haykin 2009, IEEE TAC 54(6) §VI,
// recalled from memory): Q = blockdiag(q1 M, q1 M, q2 T).
func TestCTRBDefaults(t *testing.T) {
	p, err := NewCTRB(CTRBConfig{})
	if err != nil {
		t.Fatal(err)
	}
	q1, q2 := 0.1, 1.75e-4
	want := []float64{
		q1 / 3, q1 / 2, 0, 0, 0,
		q1 / 2, q1, 0, 0, 0,
		0, 0, q1 / 3, q1 / 2, 0,
		0, 0, q1 / 2, q1, 0,
		0, 0, 0, 0, q2,
	}
	for i := range want {
		if !near(p.Model.Q[i], want[i], 0, 1e-15) {
			t.Fatalf("Q[%d] = %v, want %v", i, p.Model.Q[i], want[i])
		}
	}
	if !near(p.Model.R[0], 100, 0, 1e-15) || !near(p.Model.R[3], 10e-6, 0, 1e-14) || p.Model.R[1] != 0 {
		t.Fatalf("R = %v", p.Model.R)
	}
	if !near(p.X0[4], -0.05235987755982988, 0, 1e-15) || p.X0[1] != 300 || !sameBits(p.P0, diag(100, 10, 100, 10, 1e-4)) {
		t.Fatalf("prior %v %v", p.X0, p.P0)
	}
	if len(p.Model.AngleMeas) != 1 || p.Model.AngleMeas[0] != 1 || p.Steps != 100 || p.Dt != 1 {
		t.Fatalf("AngleMeas %v steps %d dt %v", p.Model.AngleMeas, p.Steps, p.Dt)
	}
	for _, cfg := range []CTRBConfig{{Q1: -1}, {Q2: -1}, {SigmaR: -1}, {SigmaTheta: 4}, {Dt: math.NaN()}, {Steps: -1}} {
		if _, err := NewCTRB(cfg); err == nil {
			t.Errorf("NewCTRB(%+v) gave no error", cfg)
		}
	}
}

// Taylor series of the turn coefficients (derivable from the series of sin
// and cos): a = T Σ (-1)ⁿ θ²ⁿ/(2n+1)!, b = T Σ (-1)ⁿ⁺¹ θ²ⁿ⁻¹/(2n)!, and their
// ω-derivatives da = T² Σ (-1)ⁿ 2n θ²ⁿ⁻¹/(2n+1)!,
// db = T² Σ (-1)ⁿ⁺¹ (2n-1) θ²ⁿ⁻²/(2n)!, summed here to 15 terms. In the
// series region ctCoef must match to rounding (which checks every kept
// term); in the closed-form region to the cancellation error of
// (θ cos θ - sin θ)/ω², about 3ε/θ².
func TestCTRBCoefficientSeries(t *testing.T) {
	ref := func(th, dt float64) (a, b, da, db float64) {
		// term n of each sum, accumulated from the smallest term up
		const terms = 15
		var ta, tb, tda, tdb [terms + 1]float64
		fact := 1.0 // (2n)!
		pow := 1.0  // θ^(2n)
		for n := 0; n <= terms; n++ {
			if n > 0 {
				fact *= float64(2*n-1) * float64(2*n)
				pow *= th * th
			}
			sign := 1.0
			if n%2 == 1 {
				sign = -1
			}
			ta[n] = sign * pow / (fact * float64(2*n+1))
			if n >= 1 {
				tb[n] = -sign * pow / th / fact
				tda[n] = sign * float64(2*n) * pow / th / (fact * float64(2*n+1))
				tdb[n] = -sign * float64(2*n-1) * pow / (th * th) / fact
			}
		}
		for n := terms; n >= 0; n-- {
			a += ta[n]
			b += tb[n]
			da += tda[n]
			db += tdb[n]
		}
		return dt * a, dt * b, dt * dt * da, dt * dt * db
	}
	for _, dt := range []float64{1, 2.5} {
		for _, th := range []float64{1e-3, -0.03, 0.07, math.Nextafter(ctSeries, 0), -math.Nextafter(ctSeries, 0), ctSeries, -0.5, 1.7} {
			w := th / dt
			s, c, a, b := ctCoef(w, dt)
			da, db := ctCoefDeriv(w, dt, s, c)
			ra, rb, rda, rdb := ref(w*dt, dt)
			tol, tolD := 4e-16, 4e-16
			if math.Abs(w*dt) >= ctSeries {
				tol, tolD = 2e-15, 4*2.2e-16/(th*th)
			}
			if !near(a, ra, 0, tol) || !near(b, rb, 0, tol) || !near(da, rda, 0, tolD) || !near(db, rdb, 0, tol) {
				t.Errorf("T=%v θ=%v: a %v b %v da %v db %v; series %v %v %v %v", dt, th, a, b, da, db, ra, rb, rda, rdb)
			}
		}
	}
}
