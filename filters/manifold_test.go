package filters_test

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/estbench/estbench/filters"
	"github.com/estbench/estbench/filters/filtertest"
	"gonum.org/v1/gonum/stat/distuv"
)

// euclidean returns the vector space R^n written as a Manifold: ⊞ is +
// and ⊟ is −. A filter's manifold code path on it must reproduce the
// ordinary filter, and so the Kalman filter on a linear model.
func euclidean(n int) *filters.Manifold {
	return &filters.Manifold{
		Dim: n,
		Plus: func(dst, x, d []float64) {
			for i := range dst {
				dst[i] = x[i] + d[i]
			}
		},
		Minus: func(dst, y, x []float64) {
			for i := range dst {
				dst[i] = y[i] - x[i]
			}
		},
	}
}

// withEuclidean copies m and gives the copy the Euclidean manifold.
func withEuclidean(m *filters.Model) *filters.Model {
	c := *m
	c.Manifold = euclidean(m.Nx)
	c.Linear = false
	return &c
}

// The manifold path of every filter that supports it equals the Kalman
// filter on the linear-Gaussian CV2D model when ⊞ is + (the identity of
// the sigma-point and linearised filters with the KF, Bar-Shalom, Li &
// Kirubarajan 2001, "Estimation with Applications to Tracking and
// Navigation", §5.2 and §10.3).
func TestManifoldEuclideanEqualsKF(t *testing.T) {
	cases := []struct {
		name string
		make func(m *filters.Model) (filters.Filter, error)
	}{
		{"ekf", func(m *filters.Model) (filters.Filter, error) { return filters.NewEKF(m, filters.EKFConfig{}) }},
		{"ukf", func(m *filters.Model) (filters.Filter, error) { return filters.NewUKF(m, filters.DefaultUKF()) }},
		{"ukf-simplex", func(m *filters.Model) (filters.Filter, error) {
			return filters.NewUKF(m, filters.UKFConfig{Points: filters.PointsSimplex, W0: 0.2})
		}},
		{"ckf", func(m *filters.Model) (filters.Filter, error) { return filters.NewCKF(m, filters.CKFConfig{}) }},
		{"ghkf", func(m *filters.Model) (filters.Filter, error) { return filters.NewGHKF(m, filters.GHKFConfig{}) }},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			filtertest.EqualsKF(t, func(m *filters.Model) filters.Filter {
				f, err := c.make(withEuclidean(m))
				if err != nil {
					t.Fatalf("new: %v", err)
				}
				return f
			}, 1e-9)
		})
	}
}

// The same on CV2DVaryingR, whose measurement noise covariance changes
// from step to step (Model.RAt): the manifold paths take each step's R.
func TestManifoldEuclideanVaryingREqualsKF(t *testing.T) {
	for name, mk := range map[string]func(m *filters.Model) (filters.Filter, error){
		"ekf":  func(m *filters.Model) (filters.Filter, error) { return filters.NewEKF(m, filters.EKFConfig{}) },
		"ukf":  func(m *filters.Model) (filters.Filter, error) { return filters.NewUKF(m, filters.DefaultUKF()) },
		"ckf":  func(m *filters.Model) (filters.Filter, error) { return filters.NewCKF(m, filters.CKFConfig{}) },
		"ghkf": func(m *filters.Model) (filters.Filter, error) { return filters.NewGHKF(m, filters.GHKFConfig{}) },
	} {
		t.Run(name, func(t *testing.T) {
			filtertest.EqualsKFVaryingR(t, func(m *filters.Model) filters.Filter {
				f, err := mk(withEuclidean(m))
				if err != nil {
					t.Fatalf("new: %v", err)
				}
				return f
			}, 1e-9)
		})
	}
}

// Filters without manifold support refuse such a model with ErrManifold.
func TestManifoldRefused(t *testing.T) {
	m := withEuclidean(filtertest.CV2D(0.5, 4))
	for name, mk := range map[string]func() error{
		"kf":    func() error { _, err := filters.NewKF(m, filters.KFConfig{}); return err },
		"iekf":  func() error { _, err := filters.NewIEKF(m, filters.IEKFConfig{}); return err },
		"srukf": func() error { _, err := filters.NewSRUKF(m, filters.SRUKFConfig{}); return err },
		"apf":   func() error { _, err := filters.NewAPF(m, filters.APFConfig{}); return err },
		"rpf":   func() error { _, err := filters.NewRPF(m, filters.RPFConfig{}); return err },
		"enkf":  func() error { _, err := filters.NewEnKF(m, filters.EnKFConfig{}); return err },
	} {
		if err := mk(); !errors.Is(err, filters.ErrManifold) {
			t.Errorf("%s: got %v, want ErrManifold", name, err)
		}
	}
	if _, err := filters.NewUKF(m, filters.UKFConfig{Augment: true}); err == nil {
		t.Error("ukf with Augment on a manifold: no error")
	}
	if _, err := filters.NewEKF(&filters.Model{Nx: 4, Nz: 2, F: m.F, H: m.H, Q: m.Q, R: m.R, Manifold: m.Manifold}, filters.EKFConfig{}); err == nil {
		t.Error("ekf on a manifold without Jacobians: no error")
	}
}

// quat is a Hamilton quaternion [w x y z] for the attitude model below.
type quat [4]float64

func qmul(a, b quat) quat {
	return quat{
		a[0]*b[0] - a[1]*b[1] - a[2]*b[2] - a[3]*b[3],
		a[0]*b[1] + a[1]*b[0] + a[2]*b[3] - a[3]*b[2],
		a[0]*b[2] - a[1]*b[3] + a[2]*b[0] + a[3]*b[1],
		a[0]*b[3] + a[1]*b[2] - a[2]*b[1] + a[3]*b[0],
	}
}

// qexp is the unit quaternion of the rotation vector v (angle |v|).
func qexp(v []float64) quat {
	a := math.Sqrt(v[0]*v[0] + v[1]*v[1] + v[2]*v[2])
	if a < 1e-12 {
		return quat{1, v[0] / 2, v[1] / 2, v[2] / 2}
	}
	s, c := math.Sincos(a / 2)
	return quat{c, s * v[0] / a, s * v[1] / a, s * v[2] / a}
}

// qlog is the rotation vector of a unit quaternion (shortest rotation).
func qlog(q quat) [3]float64 {
	if q[0] < 0 {
		q = quat{-q[0], -q[1], -q[2], -q[3]}
	}
	n := math.Sqrt(q[1]*q[1] + q[2]*q[2] + q[3]*q[3])
	if n < 1e-12 {
		return [3]float64{2 * q[1], 2 * q[2], 2 * q[3]}
	}
	a := 2 * math.Atan2(n, q[0]) / n
	return [3]float64{a * q[1], a * q[2], a * q[3]}
}

// rotT applies the transpose of the rotation of q (navigation to body).
func rotT(q quat, v [3]float64) [3]float64 {
	c := quat{q[0], -q[1], -q[2], -q[3]}
	r := qmul(qmul(c, quat{0, v[0], v[1], v[2]}), q)
	return [3]float64{r[1], r[2], r[3]}
}

// so3 is the rotation group with the local chart x ⊞ d = x ⊗ exp(d):
// the attitude error of the multiplicative EKF, in the body frame.
var so3 = &filters.Manifold{
	Dim: 3,
	Plus: func(dst, x, d []float64) {
		q := qmul(quat(x), qexp(d))
		n := math.Sqrt(q[0]*q[0] + q[1]*q[1] + q[2]*q[2] + q[3]*q[3])
		for i := range dst {
			dst[i] = q[i] / n
		}
	},
	Minus: func(dst, y, x []float64) {
		xc := quat{x[0], -x[1], -x[2], -x[3]}
		v := qlog(qmul(xc, quat(y)))
		copy(dst, v[:])
	},
}

// attitudeModel is a body turning at a known constant rate w (rad/s per
// step, dt = 1), observed through two reference directions measured in
// the body frame (a gravity-like and a field-like vector), each component
// with noise variance r. The process noise q·I enters the body-frame
// error. The Jacobians are those of Markley 2003 ("Attitude error
// representations for Kalman filtering", eqs. 21 and 45 for the local
// error): A = exp(−[w]×) (a rotation by −w), C = [[Rᵀ g]×; [Rᵀ m]×].
func attitudeModel(w [3]float64, q, r float64) *filters.Model {
	g, mg := [3]float64{0, 0, 1}, [3]float64{0.6, 0, -0.8}
	dq := qexp(w[:])
	cross := func(dst []float64, v [3]float64, row, nx int) {
		// skew(v) into rows row..row+2 of dst (columns 0..2, stride nx)
		dst[row*nx+0], dst[row*nx+1], dst[row*nx+2] = 0, -v[2], v[1]
		dst[(row+1)*nx+0], dst[(row+1)*nx+1], dst[(row+1)*nx+2] = v[2], 0, -v[0]
		dst[(row+2)*nx+0], dst[(row+2)*nx+1], dst[(row+2)*nx+2] = -v[1], v[0], 0
	}
	m := &filters.Model{
		Nx: 4, Nz: 6,
		F: func(dst, x []float64, k int) {
			p := qmul(quat(x), dq)
			copy(dst, p[:])
		},
		H: func(dst, x []float64, k int) {
			a, b := rotT(quat(x), g), rotT(quat(x), mg)
			copy(dst, a[:])
			copy(dst[3:], b[:])
		},
		FJac: func(dst, x []float64, k int) {
			// rotation matrix of exp(−w): Rᵀ of dq
			c := quat{dq[0], -dq[1], -dq[2], -dq[3]}
			for j := 0; j < 3; j++ {
				var e [3]float64
				e[j] = 1
				col := rotT(c, e) // R(dq) e_j ... transposed below
				for i := 0; i < 3; i++ {
					dst[j*3+i] = col[i]
				}
			}
		},
		HJac: func(dst, x []float64, k int) {
			cross(dst, rotT(quat(x), g), 0, 3)
			cross(dst, rotT(quat(x), mg), 3, 3)
		},
		Q:        []float64{q, 0, 0, 0, q, 0, 0, 0, q},
		R:        make([]float64, 36),
		Manifold: so3,
	}
	for i := 0; i < 6; i++ {
		m.R[i*6+i] = r
	}
	return m
}

// On a simulated attitude problem with exact tangent Gaussian noise, the
// multiplicative EKF and the unscented filters on the quaternion are
// consistent: their average NEES over many runs lies within the two-sided
// 99% chi-square interval of Bar-Shalom, Li & Kirubarajan 2001, §5.4.2,
// for 3 degrees of freedom, and they agree with one another.
func TestManifoldAttitudeConsistent(t *testing.T) {
	w := [3]float64{0.02, -0.05, 0.03}
	m := attitudeModel(w, 1e-4, 4e-4)
	// The truth is simulated with its own copy (the filters read m).
	sim := attitudeModel(w, 1e-4, 4e-4)
	news := map[string]func() (filters.Filter, error){
		"ekf": func() (filters.Filter, error) { return filters.NewEKF(m, filters.EKFConfig{}) },
		"ukf": func() (filters.Filter, error) { return filters.NewUKF(m, filters.DefaultUKF()) },
		"ckf": func() (filters.Filter, error) { return filters.NewCKF(m, filters.CKFConfig{}) },
	}
	const runs, steps = 60, 80
	p0 := []float64{0.01, 0, 0, 0, 0.01, 0, 0, 0, 0.01}
	for name, mk := range news {
		f, err := mk()
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		rng := rand.New(rand.NewPCG(7, 11))
		var sum float64
		n := 0
		x, p, e := make([]float64, 4), make([]float64, 9), make([]float64, 3)
		for r := 0; r < runs; r++ {
			truth := []float64{1, 0, 0, 0}
			d := make([]float64, 3)
			for i := range d {
				d[i] = 0.1 * rng.NormFloat64()
			}
			x0 := make([]float64, 4)
			so3.Plus(x0, truth, d) // prior mean = truth ⊞ error, error ~ N(0, P0)
			if err := f.Reset(x0, p0, nil); err != nil {
				t.Fatal(err)
			}
			z := make([]float64, 6)
			for k := 1; k <= steps; k++ {
				simulateAttitude(sim, truth, z, k, rng)
				if err := f.Predict(k); err != nil {
					t.Fatalf("%s run %d step %d: %v", name, r, k, err)
				}
				if err := f.Update(z, k); err != nil {
					t.Fatalf("%s run %d step %d: %v", name, r, k, err)
				}
				f.EstimateTo(x, p)
				so3.Minus(e, truth, x)
				sum += nees3(e, p)
				n++
			}
			if math.Abs(math.Hypot(math.Hypot(x[0], x[1]), math.Hypot(x[2], x[3]))-1) > 1e-12 {
				t.Errorf("%s: estimate is not a unit quaternion: %v", name, x)
			}
		}
		// The ANEES of 3 dof over 60 runs at one step lies in
		// [χ²(0.005, 180), χ²(0.995, 180)]/60 with probability 0.99 (quantiles from
		// gonum's distuv.ChiSquared); averaging over the steps as well only narrows
		// its spread, so the interval is conservative here.
		chi := distuv.ChiSquared{K: 3 * runs}
		lo, hi := chi.Quantile(0.005)/runs, chi.Quantile(0.995)/runs
		anees := sum / float64(n)
		t.Logf("%s: ANEES %.3f, interval [%.3f, %.3f]", name, anees, lo, hi)
		if anees < lo || anees > hi {
			t.Errorf("%s: ANEES %.3f outside [%.3f, %.3f]", name, anees, lo, hi)
		}
	}
}

// simulateAttitude moves the true attitude of attitudeModel sim one step,
// truth ← F(truth) ⊞ w with w ~ N(0, 1e-4 I) (the model's Q), and writes its
// measurement with noise of variance 4e-4 (the model's R) into z.
func simulateAttitude(sim *filters.Model, truth, z []float64, k int, rng *rand.Rand) {
	nxt, d := make([]float64, 4), make([]float64, 3)
	sim.F(nxt, truth, k)
	for i := range d {
		d[i] = 1e-2 * rng.NormFloat64()
	}
	so3.Plus(truth, nxt, d)
	sim.H(z, truth, k)
	for i := range z {
		z[i] += 2e-2 * rng.NormFloat64()
	}
}

// nees3 is eᵀ P⁻¹ e for a 3x3 covariance, by Cramer's rule.
func nees3(e, p []float64) float64 {
	a, b, c := p[0], p[1], p[2]
	d, ee, f := p[4], p[5], p[8]
	det := a*(d*f-ee*ee) - b*(b*f-ee*c) + c*(b*ee-d*c)
	inv := [9]float64{
		d*f - ee*ee, c*ee - b*f, b*ee - c*d,
		c*ee - b*f, a*f - c*c, b*c - a*ee,
		b*ee - c*d, b*c - a*ee, a*d - b*b,
	}
	var s float64
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			s += e[i] * inv[i*3+j] * e[j]
		}
	}
	return s / det
}

// The manifold code paths allocate nothing per step either.
func TestManifoldNoAllocs(t *testing.T) {
	m := attitudeModel([3]float64{0.02, -0.05, 0.03}, 1e-4, 4e-4)
	x0 := []float64{1, 0, 0, 0}
	p0 := []float64{0.01, 0, 0, 0, 0.01, 0, 0, 0, 0.01}
	z := []float64{0.1, 0, 1, 0.6, 0.05, -0.8}
	ekf, err := filters.NewEKF(m, filters.EKFConfig{})
	if err != nil {
		t.Fatal(err)
	}
	ukf, err := filters.NewUKF(m, filters.DefaultUKF())
	if err != nil {
		t.Fatal(err)
	}
	filtertest.NoAllocs(t, ekf, m, x0, p0, z)
	filtertest.NoAllocs(t, ukf, m, x0, p0, z)

	// With a per-step R (Model.RAt) as well.
	mr := *m
	mr.RAt = func(dst []float64, k int) bool {
		copy(dst, m.R)
		for i := 0; i < 6; i++ {
			dst[i*6+i] *= 1 + float64(k%3)
		}
		return k%4 != 0
	}
	for _, mk := range []func(*filters.Model) (filters.Filter, error){
		func(m *filters.Model) (filters.Filter, error) { return filters.NewEKF(m, filters.EKFConfig{}) },
		func(m *filters.Model) (filters.Filter, error) { return filters.NewUKF(m, filters.DefaultUKF()) },
	} {
		f, err := mk(&mr)
		if err != nil {
			t.Fatal(err)
		}
		filtertest.NoAllocs(t, f, &mr, x0, p0, z)
	}
}

// BenchmarkManifoldAttitude is one predict+update step of the
// multiplicative EKF and of the UKF on the quaternion attitude model
// (ns/op is ns per step).
func BenchmarkManifoldAttitude(b *testing.B) {
	m := attitudeModel([3]float64{0.02, -0.05, 0.03}, 1e-4, 4e-4)
	x0 := []float64{1, 0, 0, 0}
	p0 := []float64{0.01, 0, 0, 0, 0.01, 0, 0, 0, 0.01}
	z := []float64{0, 0, 1, 0.6, 0, -0.8}
	for _, name := range []string{"ekf", "ukf"} {
		b.Run(name, func(b *testing.B) {
			var f filters.Filter
			var err error
			if name == "ekf" {
				f, err = filters.NewEKF(m, filters.EKFConfig{})
			} else {
				f, err = filters.NewUKF(m, filters.DefaultUKF())
			}
			if err != nil {
				b.Fatal(err)
			}
			if err := f.Reset(x0, p0, nil); err != nil {
				b.Fatal(err)
			}
			b.ReportAllocs()
			for k := 1; b.Loop(); k++ {
				if err := f.Predict(k); err != nil {
					b.Fatal(err)
				}
				if err := f.Update(z, k); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// The pf on the Euclidean manifold draws the same noise and so holds
// bit-identical particles to the pf on the vector space from the same
// stream; only its mean (x₀ + Σ wᵢ(xᵢ − x₀) from the particle of largest
// weight, then a second step) differs, by rounding. Its estimate and
// innovation must match the ordinary pf's to 1e-9 (a tolerance far above
// rounding, far below the Monte Carlo error; our choice) at every step of
// CV2D runs with missing measurements, and so it approaches the kf as the
// ordinary pf does (TestPFApproachesKF).
func TestManifoldPFEuclideanEqualsPF(t *testing.T) {
	m := filtertest.CV2D(0.5, 4)
	me := withEuclidean(m)
	x0, p0 := filtertest.CV2DPrior()
	for _, cfg := range []filters.PFConfig{
		{Particles: 1000},
		{Particles: 500, ResampleThreshold: 0.5, Resample: filters.ResampleResidual},
	} {
		a, b := newPF(t, m, cfg), newPF(t, me, cfg)
		for seed := uint64(1); seed <= 3; seed++ {
			data := rand.New(rand.NewPCG(seed, 1))
			xt := make([]float64, 4)
			filtertest.Gaussian(xt, x0, p0, data)
			_, zs := filtertest.Simulate(m, xt, 40, data)
			zs[6], zs[20] = nil, nil
			if err := a.Reset(x0, p0, rand.New(rand.NewPCG(seed, 2))); err != nil {
				t.Fatal(err)
			}
			if err := b.Reset(x0, p0, rand.New(rand.NewPCG(seed, 2))); err != nil {
				t.Fatal(err)
			}
			xa, pa, xb, pb := make([]float64, 4), make([]float64, 16), make([]float64, 4), make([]float64, 16)
			na, sa, nb, sb := make([]float64, 2), make([]float64, 4), make([]float64, 2), make([]float64, 4)
			for k := 1; k <= len(zs); k++ {
				for _, f := range []*filters.PF{a, b} {
					if err := f.Predict(k); err != nil {
						t.Fatalf("step %d: %v", k, err)
					}
					if err := f.Update(zs[k-1], k); err != nil {
						t.Fatalf("step %d: %v", k, err)
					}
				}
				a.EstimateTo(xa, pa)
				b.EstimateTo(xb, pb)
				ia, ib := a.InnovationTo(na, sa), b.InnovationTo(nb, sb)
				if ia != ib {
					t.Fatalf("seed %d step %d: innovation reported %v and %v", seed, k, ia, ib)
				}
				for _, c := range [][2][]float64{{xb, xa}, {pb, pa}, {nb, na}, {sb, sa}} {
					if i := firstDiffRel(c[0], c[1], 1e-9); i >= 0 {
						t.Fatalf("cfg %+v seed %d step %d: manifold pf %v, pf %v (index %d)", cfg, seed, k, c[0], c[1], i)
					}
				}
				if a.ESS() != b.ESS() {
					t.Fatalf("seed %d step %d: ESS %v and %v", seed, k, b.ESS(), a.ESS())
				}
			}
		}
	}
	filtertest.HandlesMissing(t, newPF(t, me, filters.PFConfig{Particles: 200}), me, x0, p0)
}

// firstDiffRel returns the first index where got and want differ by more
// than tol·max(1, |want|), or -1.
func firstDiffRel(got, want []float64, tol float64) int {
	for i := range want {
		if !(math.Abs(got[i]-want[i]) <= tol*math.Max(1, math.Abs(want[i]))) {
			return i
		}
	}
	return -1
}

// On the quaternion attitude model the pf with 5000 particles agrees with
// the multiplicative EKF and the UKF on the same data: the tangent
// difference d = x_pf ⊟ x_ekf of the means is the Monte Carlo error of
// the pf's weighted mean, of covariance about P/ESS (the variance of an
// importance-sampling mean, Kong, Liu & Wong 1994, "Sequential imputations
// and Bayesian missing data problems", JASA 89(425), from memory), so
// ESS·dᵀP⁻¹d is about χ²(3); we allow 4 times its 0.999 quantile (the
// factor for the spread that resampling adds and the EKF's linearisation,
// our choice). The covariances agree to the relative Frobenius gap of
// TestPFApproachesKF's bound, 10·(tr(P)² + ‖P‖²)/‖P‖² / ESS (a Wishart
// sample of size ESS), and the pf's mean stays a unit quaternion.
func TestManifoldPFAttitude(t *testing.T) {
	w := [3]float64{0.02, -0.05, 0.03}
	m := attitudeModel(w, 1e-4, 4e-4)
	sim := attitudeModel(w, 1e-4, 4e-4)
	ekf, err := filters.NewEKF(m, filters.EKFConfig{})
	if err != nil {
		t.Fatal(err)
	}
	ukf, err := filters.NewUKF(m, filters.DefaultUKF())
	if err != nil {
		t.Fatal(err)
	}
	pf := newPF(t, m, filters.PFConfig{Particles: 5000})
	chi := distuv.ChiSquared{K: 3}.Quantile(0.999)
	p0 := []float64{4e-4, 0, 0, 0, 4e-4, 0, 0, 0, 4e-4}
	const steps = 25
	for seed := uint64(1); seed <= 3; seed++ {
		rng := rand.New(rand.NewPCG(seed, 5))
		truth := []float64{1, 0, 0, 0}
		d := []float64{0.02 * rng.NormFloat64(), 0.02 * rng.NormFloat64(), 0.02 * rng.NormFloat64()}
		x0 := make([]float64, 4)
		so3.Plus(x0, truth, d)
		if err := ekf.Reset(x0, p0, nil); err != nil {
			t.Fatal(err)
		}
		if err := ukf.Reset(x0, p0, nil); err != nil {
			t.Fatal(err)
		}
		if err := pf.Reset(x0, p0, rand.New(rand.NewPCG(seed, 6))); err != nil {
			t.Fatal(err)
		}
		z := make([]float64, 6)
		xp, pp := make([]float64, 4), make([]float64, 9)
		xr, pr := make([]float64, 4), make([]float64, 9)
		var worstMean, worstCov float64
		for k := 1; k <= steps; k++ {
			simulateAttitude(sim, truth, z, k, rng)
			for _, f := range []filters.Filter{ekf, ukf, pf} {
				if err := f.Predict(k); err != nil {
					t.Fatalf("seed %d step %d: %v", seed, k, err)
				}
				if err := f.Update(z, k); err != nil {
					t.Fatalf("seed %d step %d: %v", seed, k, err)
				}
			}
			ess := pf.ESS()
			pf.EstimateTo(xp, pp)
			if n := math.Hypot(math.Hypot(xp[0], xp[1]), math.Hypot(xp[2], xp[3])); math.Abs(n-1) > 1e-12 {
				t.Fatalf("seed %d step %d: pf estimate is not a unit quaternion: %v (norm %v)", seed, k, xp, n)
			}
			for name, ref := range map[string]filters.Filter{"ekf": ekf, "ukf": ukf} {
				ref.EstimateTo(xr, pr)
				e := make([]float64, 3)
				so3.Minus(e, xp, xr)
				mq := ess * nees3(e, pr) / chi
				cq := relSq(pp, pr) * ess / (10 * wishartRel(pr, 3))
				worstMean, worstCov = max(worstMean, mq), max(worstCov, cq)
				if mq > 4 {
					t.Errorf("seed %d step %d: pf mean is %.3g rad from the %s's, ESS·dᵀP⁻¹d = %.3g > 4·%.3g",
						seed, k, math.Sqrt(e[0]*e[0]+e[1]*e[1]+e[2]*e[2]), name, mq*chi, chi)
				}
				if cq > 1 {
					t.Errorf("seed %d step %d: pf covariance %.3g from the %s's %.3g (relative squared gap %.3g, ESS %.0f)",
						seed, k, pp, name, pr, relSq(pp, pr), ess)
				}
			}
		}
		t.Logf("seed %d: worst mean gap %.3g and covariance gap %.3g of their bounds", seed, worstMean/4, worstCov)
	}
}

// The pf refuses roughening on a manifold, whose tangent has no fixed
// coordinates to take component ranges in.
func TestManifoldPFRougheningRefused(t *testing.T) {
	m := attitudeModel([3]float64{0.02, -0.05, 0.03}, 1e-4, 4e-4)
	if _, err := filters.NewPF(m, filters.PFConfig{Roughening: 0.2}); err == nil {
		t.Error("pf with roughening on a manifold: no error")
	}
}

// The pf's manifold path allocates nothing per step, with and without a
// per-step R.
func TestManifoldPFNoAllocs(t *testing.T) {
	m := attitudeModel([3]float64{0.02, -0.05, 0.03}, 1e-4, 4e-4)
	x0 := []float64{1, 0, 0, 0}
	p0 := []float64{0.01, 0, 0, 0, 0.01, 0, 0, 0, 0.01}
	z := []float64{0.1, 0, 1, 0.6, 0.05, -0.8}
	filtertest.NoAllocs(t, newPF(t, m, filters.PFConfig{Particles: 300}), m, x0, p0, z)
	mr := *m
	mr.RAt = func(dst []float64, k int) bool {
		copy(dst, m.R)
		for i := 0; i < 6; i++ {
			dst[i*6+i] *= 1 + float64(k%3)
		}
		return k%4 != 0
	}
	filtertest.NoAllocs(t, newPF(t, &mr, filters.PFConfig{Particles: 300, ResampleThreshold: 0.5}), &mr, x0, p0, z)
}

// BenchmarkManifoldPF is one predict+update+estimate step of the pf on
// the quaternion attitude model, reported per particle.
func BenchmarkManifoldPF(b *testing.B) {
	m := attitudeModel([3]float64{0.02, -0.05, 0.03}, 1e-4, 4e-4)
	x0 := []float64{1, 0, 0, 0}
	p0 := []float64{0.01, 0, 0, 0, 0.01, 0, 0, 0, 0.01}
	z := []float64{0, 0, 1, 0.6, 0, -0.8}
	for _, n := range []int{1000, 5000} {
		b.Run(fmt.Sprintf("problem=attitude/filter=pf/particles=%d", n), func(b *testing.B) {
			f := newPF(b, m, filters.PFConfig{Particles: n})
			if err := f.Reset(x0, p0, rand.New(rand.NewPCG(1, 2))); err != nil {
				b.Fatal(err)
			}
			x, p := make([]float64, 4), make([]float64, 9)
			b.ReportAllocs()
			for k := 1; b.Loop(); k++ {
				if err := f.Predict(k); err != nil {
					b.Fatal(err)
				}
				if err := f.Update(z, k); err != nil {
					b.Fatal(err)
				}
				f.EstimateTo(x, p)
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(n), "ns/particle-step")
		})
	}
}
