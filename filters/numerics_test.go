package filters_test

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/estbench/estbench/filters"
	"github.com/estbench/estbench/filters/filtertest"
)

// symEigen returns the eigenvalues (ascending) of the symmetric n x n a,
// by gonum's mat.EigenSym.
func symEigen(t *testing.T, a []float64, n int) []float64 {
	t.Helper()
	var e mat.EigenSym
	if !e.Factorize(mat.NewSymDense(n, append([]float64(nil), a...)), false) {
		t.Fatal("eigendecomposition failed")
	}
	return e.Values(nil)
}

// illConditioned is a measurement far more precise than the prediction, in
// the manner of the ill-conditioned example of Grewal & Andrews 2001,
// "Kalman Filtering: Theory and Practice Using MATLAB", 2nd ed., ch. 6
// (from memory): three states with P = I and no dynamics (F = I, Q = 0),
// two measurements H = [[1, 1, 1], [1, 1, 1+δ]] with R = δ² I, δ = 1e-6.
// H nearly repeats a row, so S = H P Hᵀ + R has condition number about
// 6/δ² = 6e12 and the gain carries relative errors of order 1e-4; the
// exact posterior covariance (P⁻¹ + Hᵀ R⁻¹ H)⁻¹ = (I + HᵀH/δ²)⁻¹ has
// eigenvalues 1 (the null direction of H) and 1/(1 + σ²/δ²) for the two
// eigenvalues σ² of H Hᵀ = [[3, 3+δ], [3+δ, 3+2δ+δ²]], which has trace
// 6 + 2δ + δ² and determinant 2δ² (derived here). The smallest is
// 1/(1 + σ²_big/δ²) ≈ δ²/6 = 1.7e-13, below the error of P − K S Kᵀ,
// which is first order in the gain's error (about 1e-11 here).
func illConditioned() (m *filters.Model, x0, p0, z []float64, minEig float64) {
	return illConditionedDelta(1e-6)
}

// illConditionedDelta is illConditioned with another δ.
func illConditionedDelta(d float64) (m *filters.Model, x0, p0, z []float64, minEig float64) {
	h := []float64{1, 1, 1, 1, 1, 1 + d}
	m = &filters.Model{
		Nx: 3, Nz: 2,
		F: func(dst, x []float64, _ int) { copy(dst, x) },
		H: func(dst, x []float64, _ int) {
			dst[0] = x[0] + x[1] + x[2]
			dst[1] = x[0] + x[1] + (1+d)*x[2]
		},
		FJac:   func(dst, _ []float64, _ int) { copy(dst, []float64{1, 0, 0, 0, 1, 0, 0, 0, 1}) },
		HJac:   func(dst, _ []float64, _ int) { copy(dst, h) },
		Q:      make([]float64, 9),
		R:      []float64{d * d, 0, 0, d * d},
		Linear: true,
	}
	tr, det := 6+2*d+d*d, 2*d*d
	big := (tr + math.Sqrt(tr*tr-4*det)) / 2
	return m, []float64{0, 0, 0}, []float64{1, 0, 0, 0, 1, 0, 0, 0, 1}, []float64{1, 1}, 1 / (1 + big/(d*d))
}

// plainUpdate is the covariance update P − K (P Hᵀ)ᵀ = (I − K H) P with the
// gain K = P Hᵀ S⁻¹ found by a Cholesky factorization of S, as a filter
// without the Joseph form would compute it.
func plainUpdate(t *testing.T, m *filters.Model, p []float64) []float64 {
	nx, nz := m.Nx, m.Nz
	h := make([]float64, nz*nx)
	m.HJac(h, nil, 1)
	pht := make([]float64, nx*nz)
	for i := 0; i < nx; i++ {
		for j := 0; j < nz; j++ {
			for k := 0; k < nx; k++ {
				pht[i*nz+j] += p[i*nx+k] * h[j*nx+k]
			}
		}
	}
	s := make([]float64, nz*nz)
	for i := 0; i < nz; i++ {
		for j := 0; j < nz; j++ {
			for k := 0; k < nx; k++ {
				s[i*nz+j] += h[i*nx+k] * pht[k*nz+j]
			}
			s[i*nz+j] += m.R[i*nz+j]
		}
	}
	l := make([]float64, nz*nz)
	if !filters.Cholesky(l, s, nz) {
		t.Fatal("plain update: S not positive definite")
	}
	var lt mat.TriDense
	lt.SetRawTriangular(mat.NewTriDense(nz, mat.Lower, l).RawTriangular())
	out := append([]float64(nil), p...)
	for i := 0; i < nx; i++ {
		// Row i of K solves S kᵢ = (P Hᵀ)ᵢ.
		b := mat.NewVecDense(nz, append([]float64(nil), pht[i*nz:i*nz+nz]...))
		if err := b.SolveVec(&lt, b); err != nil {
			t.Fatal(err)
		}
		if err := b.SolveVec(lt.T(), b); err != nil {
			t.Fatal(err)
		}
		for j := 0; j < nx; j++ {
			for a := 0; a < nz; a++ {
				out[i*nx+j] -= b.AtVec(a) * pht[j*nz+a]
			}
		}
	}
	return out
}

// The plain update loses positive definiteness on illConditioned (its
// smallest eigenvalue comes out negative), while the Joseph form
// (I−KH) P (I−KH)ᵀ + K R Kᵀ of the KF (Bar-Shalom, Li & Kirubarajan 2001,
// "Estimation with Applications to Tracking and Navigation", §5.2: a sum
// of positive semi-definite terms, with an error second order in the
// gain's) and its sigma-point counterpart in the UKF and CKF keep it, with
// the smallest eigenvalue within 2% of the exact δ²/(δ² + σ²_big) (our
// allowance for a gain error of about 1e-4 relative; below 0.1% observed).
//
// The square-root UKF (van der Merwe & Wan 2001) keeps P = S Sᵀ positive
// semi-definite by construction: its covariance must have a Cholesky
// factor and a positive smallest eigenvalue. Its downdate by U = K Sz is
// the plain update in square-root form, first order in the gain's error,
// so its smallest eigenvalue is only as accurate as the plain form's: it
// must lie within 3 times the plain form's error of the exact value (half
// of it observed).
func TestJosephKeepsPositiveDefinite(t *testing.T) {
	m, x0, p0, z, minEig := illConditioned()
	plain := plainUpdate(t, m, p0)
	pev := symEigen(t, plain, 3)
	if !(pev[0] < 0) {
		t.Fatalf("the plain update kept positive definiteness (eigenvalues %v): the case does not test anything", pev)
	}
	plainErr := math.Abs(pev[0] - minEig)
	t.Logf("plain: smallest eigenvalue %.6g, exact %.6g", pev[0], minEig)
	mk := map[string]func() filters.Filter{
		"kf":    func() filters.Filter { return newKF(t, m) },
		"ukf":   func() filters.Filter { return newUKF(t, m, filters.UKFConfig{}) },
		"ckf":   func() filters.Filter { return newCKF(t, m, filters.CKFConfig{}) },
		"srukf": func() filters.Filter { return newSRUKF(t, m, filters.SRUKFConfig{}) },
	}
	for _, name := range []string{"kf", "ukf", "ckf", "srukf"} {
		f := mk[name]()
		if err := f.Reset(x0, p0, nil); err != nil {
			t.Fatal(err)
		}
		if err := f.Update(z, 1); err != nil {
			t.Errorf("%s: Update: %v", name, err)
			continue
		}
		p := make([]float64, 9)
		f.EstimateTo(make([]float64, 3), p)
		ev := symEigen(t, p, 3)
		l := make([]float64, 9)
		if !filters.Cholesky(l, p, 3) || !(ev[0] > 0) {
			t.Errorf("%s: posterior covariance not positive definite (eigenvalues %v)", name, ev)
		}
		t.Logf("%s: smallest eigenvalue %.6g, exact %.6g", name, ev[0], minEig)
		tol := 0.02 * minEig
		if name == "srukf" {
			tol = 3 * plainErr
		}
		if math.Abs(ev[0]-minEig) > tol {
			t.Errorf("%s: smallest eigenvalue %.6g, exact %.6g (tolerance %.3g)", name, ev[0], minEig, tol)
		}
	}
}

// indefinitePrior is a 4 x 4 "covariance" that has lost positive
// definiteness: P = V diag(4, 1, 1e-3, −1e-9) V with V = I − 2 w wᵀ/|w|²,
// w = (1, 2, 3, 4), a symmetric orthogonal (Householder) matrix. It
// returns P, V (whose columns are the eigenvectors) and tr(P)/4.
func indefinitePrior() (p, v []float64, tau float64) {
	w := []float64{1, 2, 3, 4}
	v = make([]float64, 16)
	for i := 0; i < 4; i++ {
		for j := 0; j < 4; j++ {
			v[i*4+j] = -2 * w[i] * w[j] / 30
		}
		v[i*4+i]++
	}
	d := []float64{4, 1, 1e-3, -1e-9}
	p = make([]float64, 16)
	for i := 0; i < 4; i++ {
		for j := 0; j < 4; j++ {
			for k := 0; k < 4; k++ {
				p[i*4+j] += v[i*4+k] * d[k] * v[j*4+k]
			}
		}
	}
	return p, v, (4 + 1 + 1e-3 - 1e-9) / 4
}

// shifted returns a + c·I (n x n).
func shifted(a []float64, n int, c float64) []float64 {
	b := append([]float64(nil), a...)
	for i := 0; i < n; i++ {
		b[i*n+i] += c
	}
	return b
}

// The jitter repair on a covariance with a negative eigenvalue −1e-9
// (indefinitePrior): without it the sigma points have no Cholesky factor
// (ErrNotPosDef); with Jitter 1e-12 the repair adds ε·τ·I, τ = tr(P)/n,
// for ε = 1e-12, 1e-11, ... until the factorization succeeds. Adding c·I
// shifts every eigenvalue by c (Weyl; Horn & Johnson 1985, "Matrix
// Analysis", §4.3, from memory), so ε = 1e-10 (1.25e-10 < 1e-9) fails and ε = 1e-9
// (1.25e-9) succeeds: the repaired filter must equal the filter started
// from P + 1e-9·τ·I, and count one repair. A JitterMax below 1e-9 is not
// enough: the step fails and counts nothing.
func TestJitterRepairUKF(t *testing.T) {
	m := filtertest.CV2D(0.5, 4)
	p0, _, tau := indefinitePrior()
	x0 := []float64{0, 1, 0, -0.5}
	z := []float64{1, -0.5}
	plain := newUKF(t, m, filters.UKFConfig{})
	if err := plain.Reset(x0, p0, nil); err != nil {
		t.Fatal(err)
	}
	if err := plain.Predict(1); err != filters.ErrNotPosDef {
		t.Fatalf("without the repair Predict returned %v, want ErrNotPosDef", err)
	}
	short := newUKF(t, m, filters.UKFConfig{Jitter: 1e-12, JitterMax: 1e-10})
	if err := short.Reset(x0, p0, nil); err != nil {
		t.Fatal(err)
	}
	if err := short.Predict(1); err != filters.ErrNotPosDef || short.Repairs() != 0 {
		t.Errorf("JitterMax 1e-10: Predict returned %v with %d repairs, want ErrNotPosDef and 0", err, short.Repairs())
	}
	p := make([]float64, 16)
	short.EstimateTo(make([]float64, 4), p)
	if e := maxRelDiff(p, p0); e > 1e-15 {
		t.Errorf("a failed repair left P changed by %.3g", e)
	}

	rep := newUKF(t, m, filters.UKFConfig{Jitter: 1e-12})
	ref := newUKF(t, m, filters.UKFConfig{})
	if err := rep.Reset(x0, p0, nil); err != nil {
		t.Fatal(err)
	}
	if err := ref.Reset(x0, shifted(p0, 4, 1e-9*tau), nil); err != nil {
		t.Fatal(err)
	}
	for _, f := range []*filters.UKF{rep, ref} {
		if err := f.Predict(1); err != nil {
			t.Fatalf("Predict: %v", err)
		}
		if err := f.Update(z, 1); err != nil {
			t.Fatalf("Update: %v", err)
		}
	}
	if n := rep.Repairs(); n != 1 {
		t.Errorf("Repairs() = %d, want 1", n)
	}
	xa, pa, xb, pb := make([]float64, 4), make([]float64, 16), make([]float64, 4), make([]float64, 16)
	rep.EstimateTo(xa, pa)
	ref.EstimateTo(xb, pb)
	// The sigma points along the repaired direction come from a pivot of
	// √(2.5e-10); its rounding (relative ε·cond ≈ 1e-6) is absolute 1e-11.
	if e := max(maxRelDiff(xa, xb), maxRelDiff(pa, pb)); e > 1e-9 {
		t.Errorf("repaired filter differs from the one started at P + 1e-9·τ·I by %.3g", e)
	}
	if err := rep.Reset(x0, p0, nil); err != nil || rep.Repairs() != 0 {
		t.Errorf("after Reset: %v, Repairs() = %d, want 0", err, rep.Repairs())
	}
	// The repair allocates nothing.
	if a := testing.AllocsPerRun(20, func() {
		_ = rep.Reset(x0, p0, nil)
		_ = rep.Predict(1)
	}); a != 0 {
		t.Errorf("a repaired Predict allocates %v times", a)
	}
}

// The square-root UKF factors its prior at Reset: the same case fails
// there without the repair and is repaired with it, to the factor of
// P + 1e-9·τ·I.
func TestJitterRepairSRUKF(t *testing.T) {
	m := filtertest.CV2D(0.5, 4)
	p0, _, tau := indefinitePrior()
	x0 := []float64{0, 1, 0, -0.5}
	if err := newSRUKF(t, m, filters.SRUKFConfig{}).Reset(x0, p0, nil); err != filters.ErrNotPosDef {
		t.Fatalf("without the repair Reset returned %v, want ErrNotPosDef", err)
	}
	f := newSRUKF(t, m, filters.SRUKFConfig{Jitter: 1e-12})
	if err := f.Reset(x0, p0, nil); err != nil {
		t.Fatal(err)
	}
	if f.Repairs() != 1 {
		t.Errorf("Repairs() = %d, want 1", f.Repairs())
	}
	p := make([]float64, 16)
	f.EstimateTo(make([]float64, 4), p)
	if e := maxRelDiff(p, shifted(p0, 4, 1e-9*tau)); e > 1e-14 {
		t.Errorf("S Sᵀ differs from P + 1e-9·τ·I by %.3g", e)
	}
}

// The KF factors only S = C P Cᵀ + R. Measuring the direction of the
// negative eigenvalue (the last column v₄ of V) and the first (v₁) with
// R = 1e-12·I gives S = diag(−1e-9 + 1e-12, 4 + 1e-12), trace/2 ≈ 2:
// ε = 1e-10 adds 2e-10 (not enough), ε = 1e-9 adds 2e-9, and the repaired
// S must be that (Weyl, as above).
func TestJitterRepairKF(t *testing.T) {
	p0, v, _ := indefinitePrior()
	c := []float64{v[3], v[7], v[11], v[15], v[0], v[4], v[8], v[12]} // rows v₄ᵀ, v₁ᵀ
	m := &filters.Model{
		Nx: 4, Nz: 2,
		F: func(dst, x []float64, _ int) { copy(dst, x) },
		H: func(dst, x []float64, _ int) {
			for i := 0; i < 2; i++ {
				dst[i] = c[i*4]*x[0] + c[i*4+1]*x[1] + c[i*4+2]*x[2] + c[i*4+3]*x[3]
			}
		},
		FJac:   func(dst, _ []float64, _ int) { copy(dst, []float64{1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1}) },
		HJac:   func(dst, _ []float64, _ int) { copy(dst, c) },
		Q:      make([]float64, 16),
		R:      []float64{1e-12, 0, 0, 1e-12},
		Linear: true,
	}
	x0 := make([]float64, 4)
	z := []float64{0.1, 0.2}
	f, err := filters.NewKF(m, filters.KFConfig{})
	if err != nil {
		t.Fatal(err)
	}
	_ = f.Reset(x0, p0, nil)
	if err := f.Update(z, 1); err != filters.ErrNotPosDef {
		t.Fatalf("without the repair Update returned %v, want ErrNotPosDef", err)
	}
	g, err := filters.NewKF(m, filters.KFConfig{Jitter: 1e-12})
	if err != nil {
		t.Fatal(err)
	}
	_ = g.Reset(x0, p0, nil)
	if err := g.Update(z, 1); err != nil {
		t.Fatalf("with the repair Update returned %v", err)
	}
	if g.Repairs() != 1 {
		t.Errorf("Repairs() = %d, want 1", g.Repairs())
	}
	s := make([]float64, 4)
	g.InnovationTo(make([]float64, 2), s)
	s11, s22 := -1e-9+1e-12, 4+1e-12
	want := shifted([]float64{s11, 0, 0, s22}, 2, 1e-9*(s11+s22)/2)
	for i := range s {
		if math.Abs(s[i]-want[i]) > 1e-14 {
			t.Errorf("repaired S[%d] = %.17g, want %.17g", i, s[i], want[i])
		}
	}
}

// With δ = 3e-7 in illConditioned the square-root UKF's measurement
// downdate by U = K Sz fails (the gain's error, first order in the
// downdate, makes S⁻S⁻ᵀ − U Uᵀ indefinite in float64): Update must report
// ErrNotPosDef. With the jitter repair on, the downdated covariance is
// formed explicitly and factored with a jitter, one repair is counted,
// and the result is positive definite with its smallest eigenvalue near
// the exact δ²/(δ² + σ²_big) ≈ 1.5e-14 in absolute terms: within the
// jitter added, ε·tr/n ≤ 1e-9 (observed ε = 1e-9, eigenvalue 4.5e-10).
func TestSRUKFDowndateFailure(t *testing.T) {
	m, x0, p0, z, minEig := illConditionedDelta(3e-7)
	f := newSRUKF(t, m, filters.SRUKFConfig{})
	if err := f.Reset(x0, p0, nil); err != nil {
		t.Fatal(err)
	}
	if err := f.Update(z, 1); err != filters.ErrNotPosDef {
		t.Fatalf("Update returned %v, want ErrNotPosDef from the failed downdate", err)
	}
	g := newSRUKF(t, m, filters.SRUKFConfig{Jitter: 1e-12})
	if err := g.Reset(x0, p0, nil); err != nil {
		t.Fatal(err)
	}
	if err := g.Update(z, 1); err != nil {
		t.Fatalf("with the repair Update returned %v", err)
	}
	if g.Repairs() != 1 {
		t.Errorf("Repairs() = %d, want 1", g.Repairs())
	}
	p := make([]float64, 9)
	g.EstimateTo(make([]float64, 3), p)
	ev := symEigen(t, p, 3)
	if !(ev[0] > 0) || ev[0]-minEig > 1e-9 {
		t.Errorf("repaired covariance: eigenvalues %v, exact smallest %.3g", ev, minEig)
	}
}
