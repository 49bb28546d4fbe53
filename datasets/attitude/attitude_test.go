package attitude

import (
	"crypto/sha256"
	"encoding/hex"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/estbench/estbench/datasets"
	"github.com/estbench/estbench/datasets/geo"
	"github.com/estbench/estbench/datasets/recorded"
	"github.com/estbench/estbench/filters"
	"github.com/estbench/estbench/metrics"
)

// broadDir returns the shared BROAD sample folder (../shared/datasets from
// the project root) after checking the SHA-256 sums its SOURCE.md lists. It
// skips the test when the sample is absent and fails it when CI=true.
func broadDir(t testing.TB) string {
	t.Helper()
	dir := filepath.Join("..", "..", "..", "shared", "datasets", "broad-imu-mocap")
	for file, sum := range map[string]string{
		"imu.csv":         "b0da9404dc2ab27614a44e2dae3ecbb8c1e12309d3873a6b674925e102cfcdfb",
		"groundtruth.csv": "e9b22446df6383fe40aa5a71a294fb91c2461cdf7c1206efdde1d7d5ae614a60",
	} {
		data, err := os.ReadFile(filepath.Join(dir, file))
		if err != nil {
			if os.Getenv("CI") == "true" {
				t.Fatalf("shared sample missing under CI: %v", err)
			}
			t.Skipf("shared BROAD sample not present (expected beside the project at ../shared/datasets): %v", err)
		}
		h := sha256.Sum256(data)
		if got := hex.EncodeToString(h[:]); got != sum {
			t.Fatalf("%s: sha256 %s, SOURCE.md lists %s", file, got, sum)
		}
	}
	return dir
}

// broadRecording reads the BROAD sample folder with the shipped mapping.
func broadRecording(t testing.TB) *recorded.Recording {
	t.Helper()
	m, err := recorded.ShippedMapping("broad-imu-mocap")
	if err != nil {
		t.Fatal(err)
	}
	rec, err := recorded.LoadCSV(m, broadDir(t))
	if err != nil {
		t.Fatal(err)
	}
	return rec
}

func loadBROAD(t testing.TB, c Config) *data {
	t.Helper()
	c.File = broadDir(t)
	c, err := c.withDefaults()
	if err != nil {
		t.Fatal(err)
	}
	rec, err := load(c)
	if err != nil {
		t.Fatal(err)
	}
	d, err := extract(rec, c)
	if err != nil {
		t.Fatal(err)
	}
	return d
}

func angleDeg(a, b geo.Quat) float64 {
	v := logq(a.Conj().Mul(b))
	return math.Sqrt(v[0]*v[0]+v[1]*v[1]+v[2]*v[2]) * 180 / math.Pi
}

// The quaternion convention, checked on the data. BROAD's SOURCE.md says
// the mocap quaternion is the sensor orientation "wrt. ENU reference
// frame", scalar first (inferred there, "check before use"), and that the
// accelerometer reads about +9.8 on z at rest; Laidig et al. 2021 (Data
// 6(7):72) give the IMU and reference as synchronised and aligned.
//  1. At rest the specific force is gravity's reaction, up in ENU: the
//     measured accelerometer direction must match Rᵀ(q)·ẑ.
//  2. Integrating the gyro from the true orientation with the body-frame
//     kinematics of the state model, q ⊗ exp(ω̄ dt), must follow the true
//     orientation through fast motion, and far better than the other
//     order, exp(ω̄ dt) ⊗ q (a navigation-frame rate). (The drift left,
//     3.6° in the worst second at up to 10 rad/s, shrinks to 1.2° when the
//     gyro is read one sample later: the truth seems to lead the IMU by
//     about 3.5 ms. We keep the data as published.)
func TestConventionOnBROAD(t *testing.T) {
	d := loadBROAD(t, Config{})
	rows := len(d.t)
	if rows != 5714 || len(d.eval) != 5713 {
		t.Fatalf("%d rows, %d steps marked; SOURCE.md: 5,714 rows", rows, len(d.eval))
	}
	// 1. The first second is at rest (SOURCE.md: 4.0 s at rest).
	var worst float64
	for k := 1; d.t[k]-d.t[0] <= 1; k++ {
		a := geo.Vec3{d.meas[(k-1)*3], d.meas[(k-1)*3+1], d.meas[(k-1)*3+2]}
		up := d.truth[k].Conj().Rotate(geo.Vec3{0, 0, 1})
		n := math.Sqrt(a[0]*a[0] + a[1]*a[1] + a[2]*a[2])
		c := (a[0]*up[0] + a[1]*up[1] + a[2]*up[2]) / n
		worst = max(worst, math.Acos(min(1, c))*180/math.Pi)
	}
	if worst > 2 {
		t.Errorf("at rest the accelerometer is %.2f° from the true up direction; want under 2°", worst)
	}

	// 2. One-second windows through the movement phase (which starts at row 1143).
	var body, nav float64
	windows := 0
	for start := 1200; start+286 < rows; start += 286 {
		qb, qn := d.truth[start], d.truth[start]
		for k := start + 1; k <= start+286; k++ {
			e := expq(d.increment([]float64{0, 0, 0}, k))
			qb, qn = qb.Mul(e).Normalize(), e.Mul(qn).Normalize()
		}
		body = max(body, angleDeg(qb, d.truth[start+286]))
		nav = max(nav, angleDeg(qn, d.truth[start+286]))
		windows++
	}
	t.Logf("%d one-second windows: worst drift %.2f° (body-frame rates), %.2f° (navigation-frame rates)", windows, body, nav)
	if windows < 10 || body > 6 || nav < 5*body {
		t.Errorf("gyro integration drifts %.2f° in one second (want under 6°), the other order %.2f° (want far more)", body, nav)
	}
}

// ⊞ and ⊟ are inverse (x ⊞ (y ⊟ x) = y, x ⊟ x = 0), exp and log are
// inverse below π, and J_r satisfies its definition
// exp(φ + δ) ≈ exp(φ) ⊗ exp(J_r(φ) δ) to second order (Solà, Deray &
// Atchuthan 2018, "A micro Lie theory for state estimation in robotics",
// eq. 143).
func TestManifoldAndJacobian(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, chart := range []string{ChartRotVec, ChartGRP} {
		checkManifold(t, Manifold(chart), rng)
	}
	for i := 0; i < 200; i++ {
		phi := [3]float64{rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64()}
		del := [3]float64{1e-4 * rng.NormFloat64(), 1e-4 * rng.NormFloat64(), 1e-4 * rng.NormFloat64()}
		jr := rightJacobian(phi)
		var jd [3]float64
		for r := 0; r < 3; r++ {
			jd[r] = jr[r*3]*del[0] + jr[r*3+1]*del[1] + jr[r*3+2]*del[2]
		}
		lhs := expq([3]float64{phi[0] + del[0], phi[1] + del[1], phi[2] + del[2]})
		rhs := expq(phi).Mul(expq(jd))
		if a := angleDeg(lhs, rhs) * math.Pi / 180; a > 1e-7 { // second order in |δ| = 1e-4
			t.Fatalf("J_r: exp(φ+δ) and exp(φ)exp(J_r δ) differ by %.3g rad", a)
		}
	}
}

// checkManifold checks x ⊞ (y ⊟ x) = y and x ⊟ x = 0 on random states,
// and that the chart agrees with the rotation vector to first order: for a
// small δ, x ⊞ δ is within |δ|³ of x ⊗ exp(δ).
func checkManifold(t *testing.T, mf *filters.Manifold, rng *rand.Rand) {
	t.Helper()
	for i := 0; i < 200; i++ {
		x, y := make([]float64, 7), make([]float64, 7)
		putQuat(x, geo.QuatFromAxisAngle(geo.Vec3{rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64()}, 3*rng.Float64()))
		putQuat(y, geo.QuatFromAxisAngle(geo.Vec3{rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64()}, 3*rng.Float64()))
		for j := 4; j < 7; j++ {
			x[j], y[j] = rng.NormFloat64(), rng.NormFloat64()
		}
		d, z, back := make([]float64, 6), make([]float64, 6), make([]float64, 7)
		mf.Minus(d, y, x)
		mf.Plus(back, x, d)
		if a := angleDeg(quatOf(back), quatOf(y)); a > 1e-9 || math.Abs(back[5]-y[5]) > 1e-12 {
			t.Fatalf("x ⊞ (y ⊟ x) is %.3g° from y", a)
		}
		mf.Minus(z, x, x)
		for _, v := range z {
			if math.Abs(v) > 1e-15 {
				t.Fatalf("x ⊟ x = %v", z)
			}
		}
		small := []float64{1e-3 * rng.NormFloat64(), 1e-3 * rng.NormFloat64(), 1e-3 * rng.NormFloat64(), 0, 0, 0}
		mf.Plus(back, x, small)
		want := quatOf(x).Mul(expq([3]float64{small[0], small[1], small[2]}))
		n := math.Sqrt(small[0]*small[0] + small[1]*small[1] + small[2]*small[2])
		if a := angleDeg(quatOf(back), want) * math.Pi / 180; a > n*n*n+1e-15 {
			t.Fatalf("x ⊞ δ is %.3g rad from x ⊗ exp(δ) for |δ| = %.3g", a, n)
		}
	}
}

// The model's tangent Jacobians match central differences through ⊞ and
// ⊟ on the BROAD data, at a perturbed state.
func TestJacobiansMatchDifferences(t *testing.T) {
	c := Config{Magnetometer: true}
	p, err := New(Config{File: broadDir(t), Magnetometer: true})
	if err != nil {
		t.Fatal(err)
	}
	_ = c
	m := &p.Model
	mf := m.Manifold
	x := make([]float64, 7)
	putQuat(x, geo.QuatFromAxisAngle(geo.Vec3{1, 2, 3}, 0.7))
	x[4], x[5], x[6] = 0.01, -0.02, 0.005
	for _, k := range []int{1, 2000, 3000} {
		a, fx := make([]float64, 36), make([]float64, 7)
		m.FJac(a, x, k)
		m.F(fx, x, k)
		c := make([]float64, 6*6)
		m.HJac(c, x, k)
		hx := make([]float64, 6)
		m.H(hx, x, k)
		const h = 1e-6
		for j := 0; j < 6; j++ {
			d := make([]float64, 6)
			xp, xm := make([]float64, 7), make([]float64, 7)
			d[j] = h
			mf.Plus(xp, x, d)
			d[j] = -h
			mf.Plus(xm, x, d)
			fp, fm := make([]float64, 7), make([]float64, 7)
			m.F(fp, xp, k)
			m.F(fm, xm, k)
			ep, em := make([]float64, 6), make([]float64, 6)
			mf.Minus(ep, fp, fx)
			mf.Minus(em, fm, fx)
			hp, hm := make([]float64, 6), make([]float64, 6)
			m.H(hp, xp, k)
			m.H(hm, xm, k)
			for i := 0; i < 6; i++ {
				if g := (ep[i] - em[i]) / (2 * h); math.Abs(g-a[i*6+j]) > 1e-6 {
					t.Errorf("step %d: FJac[%d][%d] = %.8f, differences %.8f", k, i, j, a[i*6+j], g)
				}
				if g := (hp[i] - hm[i]) / (2 * h); math.Abs(g-c[i*6+j]) > 1e-5*(1+math.Abs(g)) {
					t.Errorf("step %d: HJac[%d][%d] = %.8f, differences %.8f", k, i, j, c[i*6+j], g)
				}
			}
		}
	}
}

// runFilter runs f over the problem's data from the run's prior and
// returns the attitude RMSE in degrees over the steps marked for
// evaluation, and the average NEES of the attitude error there.
func runFilter(t *testing.T, p *datasets.Problem, f filters.Filter, seq *datasets.Sequence) (rmse, anees float64) {
	t.Helper()
	if err := f.Reset(seq.Prior, p.P0, nil); err != nil {
		t.Fatal(err)
	}
	x, pc, e := make([]float64, 7), make([]float64, 36), make([]float64, 6)
	p3, work := make([]float64, 9), make([]float64, 12)
	var se, ne float64
	n := 0
	for k := 1; k <= p.Steps; k++ {
		if err := f.Predict(k); err != nil {
			t.Fatalf("step %d: %v", k, err)
		}
		if err := f.Update(seq.Meas(k), k); err != nil {
			t.Fatalf("step %d: %v", k, err)
		}
		if !p.Eval[k-1] {
			continue
		}
		f.EstimateTo(x, pc)
		p.Model.Manifold.Minus(e, seq.State(k), x)
		se += (e[0]*e[0] + e[1]*e[1] + e[2]*e[2])
		for r := 0; r < 3; r++ { // the attitude block of P
			copy(p3[r*3:r*3+3], pc[r*6:r*6+3])
		}
		v, ok := metrics.Normalised(e[:3], p3, work)
		if !ok {
			t.Fatalf("step %d: attitude covariance not positive definite", k)
		}
		ne += v
		n++
	}
	return math.Sqrt(se/float64(n)) * 180 / math.Pi, ne / float64(n)
}

// On the BROAD sample the multiplicative EKF and the quaternion UKF track
// the mocap orientation. With the magnetometer every axis is observed and
// the error stays within a few degrees through the 16 s of fast motion;
// the bound of 6° is ours (our loose reading of Laidig et al. 2021, who
// from memory report errors of a few degrees for tuned filters on the
// undisturbed trials; we have not checked their tables). Without it the
// heading error keeps most of the prior's 5° per axis. The two filters
// agree to within 1°, as they should on a model this close to linear over
// one 3.5 ms step.
func TestFiltersOnBROAD(t *testing.T) {
	for _, mag := range []bool{false, true} {
		p, err := New(Config{File: broadDir(t), Magnetometer: mag})
		if err != nil {
			t.Fatal(err)
		}
		var seq datasets.Sequence
		p.Run(&seq, rand.New(rand.NewPCG(1, 2)))
		ekf, err := filters.NewEKF(&p.Model, filters.EKFConfig{})
		if err != nil {
			t.Fatal(err)
		}
		ukf, err := filters.NewUKF(&p.Model, filters.DefaultUKF())
		if err != nil {
			t.Fatal(err)
		}
		re, ae := runFilter(t, p, ekf, &seq)
		ru, au := runFilter(t, p, ukf, &seq)
		t.Logf("magnetometer %v: ekf %.2f° ANEES %.2f, ukf %.2f° ANEES %.2f", mag, re, ae, ru, au)
		if mag && (re > 6 || ru > 6) {
			t.Errorf("with the magnetometer: ekf %.2f°, ukf %.2f°; want under 6°", re, ru)
		}
		// Gravity only: the heading keeps the prior's error (5° per axis).
		if !mag && (re > 8 || ru > 8 || ae > 3 || au > 3) {
			t.Errorf("gyro and accelerometer: ekf %.2f° ANEES %.2f, ukf %.2f° ANEES %.2f; want under 8° and ANEES under 3", re, ae, ru, au)
		}
		if math.Abs(re-ru) > 1 {
			t.Errorf("ekf %.2f° and ukf %.2f° differ by more than 1°", re, ru)
		}
	}
}

// Bad settings and recordings are refused with a message that says what
// is wrong.
func TestErrors(t *testing.T) {
	for _, c := range []struct {
		cfg  Config
		want string
	}{
		{Config{GyroNoise: -1}, "GyroNoise must be a positive"},
		{Config{Steps: -1}, "Steps must not be negative"},
		{Config{File: filepath.Join(t.TempDir(), "nothing.arrow")}, "no such file"},
		{Config{File: "attitude.go"}, "want an .arrow recording or a folder"},
		{Config{File: t.TempDir()}, "no mapping is given"},
	} {
		_, err := New(c.cfg)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%+v: error %v, want one containing %q", c.cfg, err, c.want)
		}
	}
}

// The problem reads an imported .arrow recording (estbench data import)
// exactly as it reads the CSV folder: the normalised form round-trips.
func TestArrowRecordingSameAsFolder(t *testing.T) {
	dir := broadDir(t)
	rec := broadRecording(t)
	file := filepath.Join(t.TempDir(), "trial.arrow")
	if err := recorded.WriteFile(file, rec); err != nil {
		t.Fatal(err)
	}
	a, err := New(Config{File: dir, Magnetometer: true})
	if err != nil {
		t.Fatal(err)
	}
	b, err := New(Config{File: file, Magnetometer: true})
	if err != nil {
		t.Fatal(err)
	}
	var sa, sb datasets.Sequence
	a.Run(&sa, rand.New(rand.NewPCG(1, 1)))
	b.Run(&sb, rand.New(rand.NewPCG(1, 1)))
	same := func(x, y []float64) bool {
		if len(x) != len(y) {
			return false
		}
		for i := range x {
			if x[i] != y[i] && !(math.IsNaN(x[i]) && math.IsNaN(y[i])) {
				return false
			}
		}
		return true
	}
	if !same(sa.Z, sb.Z) || !same(sa.Truth, sb.Truth) || !same(sa.Prior, sb.Prior) || !same(a.Model.R, b.Model.R) || a.Steps != b.Steps {
		t.Fatal("the .arrow recording gives a different problem than the folder")
	}
	for k := range a.Eval {
		if a.Eval[k] != b.Eval[k] {
			t.Fatalf("evaluation mark differs at step %d", k+1)
		}
	}
}

// BenchmarkStep is one predict+update step of the multiplicative EKF and
// of the quaternion UKF on the BROAD sample with the magnetometer (ns/op
// is ns per step; allocs/op must be 0).
func BenchmarkStep(b *testing.B) {
	p, err := New(Config{File: broadDir(b), Magnetometer: true})
	if err != nil {
		b.Fatal(err)
	}
	var seq datasets.Sequence
	p.Run(&seq, rand.New(rand.NewPCG(1, 1)))
	for _, name := range []string{"ekf", "ukf"} {
		b.Run(name, func(b *testing.B) {
			var f filters.Filter
			if name == "ekf" {
				f, err = filters.NewEKF(&p.Model, filters.EKFConfig{})
			} else {
				f, err = filters.NewUKF(&p.Model, filters.DefaultUKF())
			}
			if err != nil {
				b.Fatal(err)
			}
			b.ReportAllocs()
			k := p.Steps
			for b.Loop() {
				if k == p.Steps {
					if err := f.Reset(seq.Prior, p.P0, nil); err != nil {
						b.Fatal(err)
					}
					k = 0
				}
				k++
				if err := f.Predict(k); err != nil {
					b.Fatal(err)
				}
				if err := f.Update(seq.Meas(k), k); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// With a = 1 and f = 4 the GRP of a rotation by θ about e is 4·tan(θ/4)·e
// (four times the modified Rodrigues parameters; Crassidis & Markley 2003,
// §III, and Shuster 1993, "A survey of attitude representations",
// J. Astronautical Sciences 41(4), §7.6, for the MRP tan(θ/4)); and the
// UKF on the BROAD sample gives nearly the same error with either chart.
func TestGRPChart(t *testing.T) {
	e := geo.Vec3{2.0 / 7, 3.0 / 7, 6.0 / 7} // unit
	for _, th := range []float64{1e-6, 0.1, 1, 2, 3} {
		p := quatGRP(geo.QuatFromAxisAngle(e, th))
		for i := range p {
			if want := 4 * math.Tan(th/4) * e[i]; math.Abs(p[i]-want) > 1e-14*(1+math.Abs(want)) {
				t.Errorf("θ %v: GRP %v, want 4 tan(θ/4) e = %v", th, p, want)
			}
		}
		if a := angleDeg(grpQuat(p), geo.QuatFromAxisAngle(e, th)); a > 1e-9 {
			t.Errorf("θ %v: GRP back to quaternion off by %.3g°", th, a)
		}
	}
	var rmse [2]float64
	for i, chart := range []string{ChartRotVec, ChartGRP} {
		p, err := New(Config{File: broadDir(t), Chart: chart})
		if err != nil {
			t.Fatal(err)
		}
		var seq datasets.Sequence
		p.Run(&seq, rand.New(rand.NewPCG(1, 2)))
		ukf, err := filters.NewUKF(&p.Model, filters.DefaultUKF())
		if err != nil {
			t.Fatal(err)
		}
		rmse[i], _ = runFilter(t, p, ukf, &seq)
	}
	t.Logf("ukf: %.4f° (rotation vector), %.4f° (GRP)", rmse[0], rmse[1])
	if math.Abs(rmse[0]-rmse[1]) > 0.1 {
		t.Errorf("ukf: %.4f° with the rotation vector, %.4f° with GRP", rmse[0], rmse[1])
	}
	if _, err := New(Config{Chart: "euler"}); err == nil || !strings.Contains(err.Error(), "Chart must be") {
		t.Errorf("chart euler: %v", err)
	}
}
