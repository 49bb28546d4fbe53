// Package filtertest holds the properties every estimator in package filters
// must have, as checks a filter's own test calls:
//
//   - EqualsKF: on a linear-Gaussian model it gives the Kalman filter's mean
//     and covariance (sigma-point filters exactly, up to rounding), and
//     EqualsKFVaryingR the same with a measurement noise covariance that
//     changes from step to step (Model.RAt);
//   - NoAllocs: Reset, Predict, Update, EstimateTo (and InnovationTo, ESS
//     when implemented) allocate nothing after set-up;
//   - HandlesMissing: Update(nil) leaves the prediction unchanged and an
//     Innovator then reports no innovation.
//
// It also exports the linear-Gaussian test models CV2D and CV2DVaryingR
// and a simulator for any additive-noise Model, for tests that need data
// (particle filter convergence, for one).
package filtertest

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"

	"github.com/estbench/estbench/filters"
)

// CV2D returns the planar constant-velocity model with discrete white noise
// acceleration (DWNA) of Bar-Shalom, Li & Kirubarajan 2001, "Estimation with
// Applications to Tracking and Navigation", §6.3.2: state [px, vx, py, vy],
// sample time T = 1, per axis
//
//	A = [[1, T], [0, 1]],  Q = q·[[T⁴/4, T³/2], [T³/2, T²]],
//
// and a position measurement [px, py] with R = r·I. q is the variance of
// the acceleration held over one step. Q has rank one per axis (it is
// singular): filters must not need a Cholesky factor of Q.
//
// The model is Linear, with FJac, HJac, FMany and HMany set.
func CV2D(q, r float64) *filters.Model {
	const T = 1.0
	a := []float64{
		1, T, 0, 0,
		0, 1, 0, 0,
		0, 0, 1, T,
		0, 0, 0, 1,
	}
	c := []float64{
		1, 0, 0, 0,
		0, 0, 1, 0,
	}
	q11, q12, q22 := q*T*T*T*T/4, q*T*T*T/2, q*T*T
	f := func(dst, x []float64, _ int) {
		dst[0] = x[0] + T*x[1]
		dst[1] = x[1]
		dst[2] = x[2] + T*x[3]
		dst[3] = x[3]
	}
	h := func(dst, x []float64, _ int) {
		dst[0] = x[0]
		dst[1] = x[2]
	}
	return &filters.Model{
		Nx: 4, Nz: 2,
		F:    f,
		H:    h,
		FJac: func(dst, _ []float64, _ int) { copy(dst, a) },
		HJac: func(dst, _ []float64, _ int) { copy(dst, c) },
		FMany: func(dst, x []float64, k int) {
			for i := 0; i+4 <= len(x); i += 4 {
				f(dst[i:i+4], x[i:i+4], k)
			}
		},
		HMany: func(dst, x []float64, k int) {
			for i, j := 0, 0; i+4 <= len(x); i, j = i+4, j+2 {
				h(dst[j:j+2], x[i:i+4], k)
			}
		},
		Q: []float64{
			q11, q12, 0, 0,
			q12, q22, 0, 0,
			0, 0, q11, q12,
			0, 0, q12, q22,
		},
		R: []float64{
			r, 0,
			0, r,
		},
		Linear: true,
	}
}

// CV2DVaryingR returns CV2D(q, r) with a measurement noise covariance
// that changes from step to step through Model.RAt: at step k with
// k mod 6 = 0 RAt reports none (R = r·I is used), and otherwise
//
//	R_k = [[a, c], [c, b]],  a = r·(0.2 + 0.3·(k mod 5)),
//	b = r·(2.5 − 0.4·(k mod 3)),  c = (−1)^k·0.3·√(a b),
//
// positive definite (correlation ±0.3) with variances from 0.2r to 2.5r,
// so both the per-step values and the fall-back to R are exercised. RAt
// allocates nothing.
func CV2DVaryingR(q, r float64) *filters.Model {
	m := CV2D(q, r)
	m.RAt = func(dst []float64, k int) bool {
		if k%6 == 0 {
			return false
		}
		a := r * (0.2 + 0.3*float64(k%5))
		b := r * (2.5 - 0.4*float64(k%3))
		c := 0.3 * math.Sqrt(a*b)
		if k%2 == 1 {
			c = -c
		}
		dst[0], dst[1], dst[2], dst[3] = a, c, c, b
		return true
	}
	return m
}

// RAtOrR returns the measurement noise covariance of step k of m: the
// value of m.RAt if it reports one, else m.R (a fresh slice).
func RAtOrR(m *filters.Model, k int) []float64 {
	r := make([]float64, len(m.R))
	if m.RAt != nil && m.RAt(r, k) {
		return r
	}
	copy(r, m.R)
	return r
}

// CV2DPrior returns the prior used with CV2D by the checks here: mean
// [0, 1, 0, -0.5] and covariance diag(100, 4, 100, 4).
func CV2DPrior() (x0, p0 []float64) {
	x0 = []float64{0, 1, 0, -0.5}
	p0 = []float64{
		100, 0, 0, 0,
		0, 4, 0, 0,
		0, 0, 100, 0,
		0, 0, 0, 4,
	}
	return x0, p0
}

// Simulate draws a run of steps steps of the additive-Gaussian model m
// from the true initial state x0: truth[k-1] is the state at step k and
// z[k-1] its measurement. Noise is drawn from rng through a symmetric
// square root of Q and R (eigendecomposition), so singular noise
// covariances such as CV2D's Q work; the measurement noise of step k is
// that of m.RAt when the model has it (RAtOrR). Callers mark a measurement missing by
// setting z[k-1] = nil. Simulate allocates; it is for tests.
func Simulate(m *filters.Model, x0 []float64, steps int, rng *rand.Rand) (truth, z [][]float64) {
	sq := sqrtPSD(m.Q, m.Nx)
	sr := sqrtPSD(m.R, m.Nz)
	x := append([]float64(nil), x0...)
	e := make([]float64, max(m.Nx, m.Nz))
	truth = make([][]float64, steps)
	z = make([][]float64, steps)
	for k := 1; k <= steps; k++ {
		xn := make([]float64, m.Nx)
		m.F(xn, x, k)
		addNoise(xn, sq, e[:m.Nx], rng)
		zk := make([]float64, m.Nz)
		m.H(zk, xn, k)
		if m.RAt != nil {
			sr = sqrtPSD(RAtOrR(m, k), m.Nz)
		}
		addNoise(zk, sr, e[:m.Nz], rng)
		truth[k-1], z[k-1] = xn, zk
		x = xn
	}
	return truth, z
}

// Gaussian writes a draw from N(mean, cov) into dst (cov may be singular).
// It allocates; it is for tests.
func Gaussian(dst, mean, cov []float64, rng *rand.Rand) {
	n := len(mean)
	copy(dst, mean)
	addNoise(dst, sqrtPSD(cov, n), make([]float64, n), rng)
}

// sqrtPSD returns S (n x n, row-major) with S Sᵀ = a for a symmetric
// positive semi-definite a, from a = V D Vᵀ: S = V D^½ (negative rounding
// eigenvalues clipped to zero).
func sqrtPSD(a []float64, n int) []float64 {
	var eig mat.EigenSym
	if !eig.Factorize(mat.NewSymDense(n, append([]float64(nil), a...)), true) {
		panic("filtertest: eigendecomposition failed")
	}
	var v mat.Dense
	eig.VectorsTo(&v)
	d := eig.Values(nil)
	s := make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			s[i*n+j] = v.At(i, j) * math.Sqrt(max(d[j], 0))
		}
	}
	return s
}

func addNoise(dst, s, e []float64, rng *rand.Rand) {
	n := len(dst)
	for i := range e {
		e[i] = rng.NormFloat64()
	}
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			dst[i] += s[i*n+j] * e[j]
		}
	}
}

// eqSteps is the length of the EqualsKF run; eqMissing the steps without a
// measurement (a lone gap, and a run of three).
const eqSteps = 60

func eqMissing(k int) bool { return k == 7 || k == 19 || (k >= 33 && k <= 35) || k == 50 }

// EqualsKF runs the filter made by newFilter and a KF side by side on a
// 60-step simulated run of CV2D(0.5, 4) from CV2DPrior, with measurements
// missing at steps 7, 19, 33-35 and 50, and fails t unless after every
// Predict and every Update the means and covariances agree to within tol,
// absolute or relative (gonum's scalar.EqualWithinAbsOrRel). If both
// filters are Innovators their S are compared the same way and their
// innovations to within tol*max(1, |z|), since an innovation z − ẑ carries
// the rounding error of ẑ, whose size is that of z.
// The data come from a fixed PCG seed.
func EqualsKF(t testing.TB, newFilter func(m *filters.Model) filters.Filter, tol float64) {
	t.Helper()
	equalsKF(t, CV2D(0.5, 4), newFilter, tol)
}

// EqualsKFVaryingR is EqualsKF on CV2DVaryingR(0.5, 4), whose
// measurement noise covariance changes from step to step (Model.RAt), and
// whose data are simulated with it. The reference is the KF with RAt,
// itself checked against the KF of the whitened model in package filters.
func EqualsKFVaryingR(t testing.TB, newFilter func(m *filters.Model) filters.Filter, tol float64) {
	t.Helper()
	equalsKF(t, CV2DVaryingR(0.5, 4), newFilter, tol)
}

func equalsKF(t testing.TB, m *filters.Model, newFilter func(m *filters.Model) filters.Filter, tol float64) {
	t.Helper()
	x0, p0 := CV2DPrior()
	rng := rand.New(rand.NewPCG(20240611, 1))
	xt := make([]float64, m.Nx)
	Gaussian(xt, x0, p0, rng)
	_, zs := Simulate(m, xt, eqSteps, rng)

	ref, err := filters.NewKF(m, filters.KFConfig{})
	if err != nil {
		t.Fatalf("NewKF: %v", err)
	}
	f := newFilter(m)
	if f == nil {
		t.Fatal("newFilter returned nil")
	}
	if err := ref.Reset(x0, p0, nil); err != nil {
		t.Fatalf("kf Reset: %v", err)
	}
	if err := f.Reset(x0, p0, rand.New(rand.NewPCG(1, 2))); err != nil {
		t.Fatalf("Reset: %v", err)
	}
	nx, nz := m.Nx, m.Nz
	xr, pr := make([]float64, nx), make([]float64, nx*nx)
	xf, pf := make([]float64, nx), make([]float64, nx*nx)
	nur, sr := make([]float64, nz), make([]float64, nz*nz)
	nuf, sf := make([]float64, nz), make([]float64, nz*nz)
	innR, okR := filters.Filter(ref).(filters.Innovator)
	innF, okF := f.(filters.Innovator)
	compare := func(what string, k int) {
		t.Helper()
		ref.EstimateTo(xr, pr)
		f.EstimateTo(xf, pf)
		if i := firstDiff(xf, xr, tol); i >= 0 {
			t.Fatalf("step %d after %s: mean[%d] = %.17g, kf %.17g (tol %g)", k, what, i, xf[i], xr[i], tol)
		}
		if i := firstDiff(pf, pr, tol); i >= 0 {
			t.Fatalf("step %d after %s: cov[%d,%d] = %.17g, kf %.17g (tol %g)", k, what, i/nx, i%nx, pf[i], pr[i], tol)
		}
	}
	for k := 1; k <= eqSteps; k++ {
		if err := ref.Predict(k); err != nil {
			t.Fatalf("kf Predict(%d): %v", k, err)
		}
		if err := f.Predict(k); err != nil {
			t.Fatalf("Predict(%d): %v", k, err)
		}
		compare("Predict", k)
		z := zs[k-1]
		if eqMissing(k) {
			z = nil
		}
		if err := ref.Update(z, k); err != nil {
			t.Fatalf("kf Update(%d): %v", k, err)
		}
		if err := f.Update(z, k); err != nil {
			t.Fatalf("Update(%d): %v", k, err)
		}
		compare("Update", k)
		if okR && okF {
			hr := innR.InnovationTo(nur, sr)
			hf := innF.InnovationTo(nuf, sf)
			if hr != hf {
				t.Fatalf("step %d: InnovationTo reports %v, kf %v", k, hf, hr)
			}
			if hr {
				// ν = z − ẑ is a difference: its error is that of ẑ,
				// so it is measured against the size of z.
				for i := range nur {
					if math.Abs(nuf[i]-nur[i]) > tol*max(1, math.Abs(z[i])) {
						t.Fatalf("step %d: innovation[%d] = %.17g, kf %.17g (z %.17g, tol %g)", k, i, nuf[i], nur[i], z[i], tol)
					}
				}
				if i := firstDiff(sf, sr, tol); i >= 0 {
					t.Fatalf("step %d: S[%d] = %.17g, kf %.17g", k, i, sf[i], sr[i])
				}
			}
		}
	}
}

func firstDiff(got, want []float64, tol float64) int {
	for i := range want {
		if !scalar.EqualWithinAbsOrRel(got[i], want[i], tol, tol) {
			return i
		}
	}
	return -1
}

// NoAllocs fails t unless f, built for m, allocates nothing in Reset and in
// a step of Predict, Update (with a measurement and without), EstimateTo,
// and InnovationTo and ESS when f implements them (testing.AllocsPerRun).
// The filter is reset from x0, p0 and fed z at every step; if z is nil the
// noise-free measurement of x0 is used.
func NoAllocs(t testing.TB, f filters.Filter, m *filters.Model, x0, p0, z []float64) {
	t.Helper()
	if z == nil {
		z = make([]float64, m.Nz)
		m.H(z, x0, 1)
	}
	rng := rand.New(rand.NewPCG(3, 4))
	x, p := make([]float64, m.Nx), make([]float64, m.Nd()*m.Nd())
	nu, s := make([]float64, m.Nz), make([]float64, m.Nz*m.Nz)
	inn, isInn := f.(filters.Innovator)
	ess, isESS := f.(filters.ESSer)
	var err error
	if a := testing.AllocsPerRun(20, func() {
		if e := f.Reset(x0, p0, rng); e != nil {
			err = e
		}
	}); a != 0 {
		t.Errorf("Reset allocates %v times", a)
	}
	k := 0
	var sink float64
	step := func() {
		k++
		if e := f.Predict(k); e != nil && err == nil {
			err = e
		}
		zk := z
		if k%5 == 0 {
			zk = nil
		}
		if e := f.Update(zk, k); e != nil && err == nil {
			err = e
		}
		f.EstimateTo(x, p)
		if isInn {
			inn.InnovationTo(nu, s)
		}
		if isESS {
			sink += ess.ESS()
		}
	}
	// Run the steps from a fresh Reset so the filter stays in a sane regime.
	if e := f.Reset(x0, p0, rng); e != nil {
		t.Fatalf("Reset: %v", e)
	}
	if a := testing.AllocsPerRun(50, step); a != 0 {
		t.Errorf("a step allocates %v times", a)
	}
	if err != nil {
		t.Errorf("step failed during the allocation check: %v", err)
	}
	_ = sink
}

// HandlesMissing fails t unless, after Reset from x0, p0 and Predict(1),
// Update(nil, 1) leaves the mean and covariance bit-for-bit unchanged and,
// if f is an Innovator, InnovationTo then reports false.
func HandlesMissing(t testing.TB, f filters.Filter, m *filters.Model, x0, p0 []float64) {
	t.Helper()
	if err := f.Reset(x0, p0, rand.New(rand.NewPCG(5, 6))); err != nil {
		t.Fatalf("Reset: %v", err)
	}
	if err := f.Predict(1); err != nil {
		t.Fatalf("Predict: %v", err)
	}
	x1, p1 := make([]float64, m.Nx), make([]float64, m.Nd()*m.Nd())
	f.EstimateTo(x1, p1)
	if err := f.Update(nil, 1); err != nil {
		t.Fatalf("Update(nil): %v", err)
	}
	x2, p2 := make([]float64, m.Nx), make([]float64, m.Nd()*m.Nd())
	f.EstimateTo(x2, p2)
	for i := range x1 {
		if x1[i] != x2[i] {
			t.Errorf("Update(nil) changed mean[%d]: %v -> %v", i, x1[i], x2[i])
		}
	}
	for i := range p1 {
		if p1[i] != p2[i] {
			t.Errorf("Update(nil) changed cov[%d]: %v -> %v", i, p1[i], p2[i])
		}
	}
	if inn, ok := f.(filters.Innovator); ok {
		if inn.InnovationTo(make([]float64, m.Nz), make([]float64, m.Nz*m.Nz)) {
			t.Error("InnovationTo reports an innovation after Update(nil)")
		}
	}
}
