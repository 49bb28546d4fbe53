package filters_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"

	"github.com/estbench/estbench/filters"
	"github.com/estbench/estbench/filters/filtertest"
)

// withConstRAt copies m and gives the copy an RAt that reports R itself at
// every step.
func withConstRAt(m *filters.Model) *filters.Model {
	c := *m
	r := m.R
	c.RAt = func(dst []float64, _ int) bool { copy(dst, r); return true }
	return &c
}

// asNoiseArgs writes the additive model m with its noises as arguments,
// FW(x, w) = F(x) + w and HV(x, v) = H(x) + v (as
// TestUKFNonAdditiveModelEqualsKF does), keeping m's RAt.
func asNoiseArgs(m *filters.Model) *filters.Model {
	c := *m
	c.FMany, c.HMany = nil, nil
	c.Nw, c.Nv = m.Nx, m.Nz
	c.FW = func(dst, x, w []float64, k int) {
		m.F(dst, x, k)
		for i := range dst {
			dst[i] += w[i]
		}
	}
	c.HV = func(dst, x, v []float64, k int) {
		m.H(dst, x, k)
		for i := range dst {
			dst[i] += v[i]
		}
	}
	return &c
}

// withGaussLogLik copies m and gives it MeasLogLik, the Gaussian
// log-density with m's diagonal R (up to a constant).
func withGaussLogLik(m *filters.Model) *filters.Model {
	c := *m
	nz := m.Nz
	zh := make([]float64, nz)
	c.MeasLogLik = func(z, x []float64, k int) float64 {
		m.H(zh, x, k)
		var s float64
		for i := range zh {
			d := z[i] - zh[i]
			s += d * d / m.R[i*nz+i]
		}
		return -0.5 * s
	}
	return &c
}

// ratCase is a filter on a model, for the checks of a per-step R.
type ratCase struct {
	name   string
	m      *filters.Model // the model (RAt nil); the filter is built on a variant of it
	sim    *filters.Model // additive model the data are simulated from (nil: m)
	x0, p0 []float64
	mk     func(m *filters.Model) (filters.Filter, error)
}

// ratCases covers every filter and each code path that uses R: the
// linearised core (kf, ekf, iekf), the sigma-point core with and without
// augmented measurement noise, on a manifold and with angles, the
// square-root UKF, and the particle and ensemble filters (general and
// scalar paths, the Gaussian likelihood, MeasLogLik, HV).
func ratCases() []ratCase {
	cv := filtertest.CV2D(0.5, 4)
	cx, cp := filtertest.CV2DPrior()
	ct := ctRangeBearing()
	tx, tp := ctPrior()
	rw := scalarRW(1, 2)
	rwHV := scalarRW(1, 2)
	rwHV.HMany = nil
	rwHV.Nv = 1
	rwHV.HV = func(dst, x, v []float64, _ int) { dst[0] = x[0] + v[0] }
	rwHV.MeasLogLik = func(z, x []float64, _ int) float64 { d := z[0] - x[0]; return -d * d / 4 }
	ukf := func(cfg filters.UKFConfig) func(m *filters.Model) (filters.Filter, error) {
		return func(m *filters.Model) (filters.Filter, error) { return filters.NewUKF(m, cfg) }
	}
	ekf := func(m *filters.Model) (filters.Filter, error) { return filters.NewEKF(m, filters.EKFConfig{}) }
	pf := func(m *filters.Model) (filters.Filter, error) {
		return filters.NewPF(m, filters.PFConfig{Particles: 300})
	}
	enkf := func(m *filters.Model) (filters.Filter, error) {
		return filters.NewEnKF(m, filters.EnKFConfig{Members: 50})
	}
	return []ratCase{
		{"kf", cv, nil, cx, cp, func(m *filters.Model) (filters.Filter, error) { return filters.NewKF(m, filters.KFConfig{}) }},
		{"ekf", cv, nil, cx, cp, ekf},
		{"ekf/ct", ct, nil, tx, tp, ekf},
		{"ekf/manifold", withEuclidean(cv), cv, cx, cp, ekf},
		{"iekf/ct", ct, nil, tx, tp, func(m *filters.Model) (filters.Filter, error) { return filters.NewIEKF(m, filters.IEKFConfig{}) }},
		{"ukf", cv, nil, cx, cp, ukf(filters.UKFConfig{})},
		{"ukf/ct", ct, nil, tx, tp, ukf(filters.UKFConfig{})},
		{"ukf/augment", cv, nil, cx, cp, ukf(filters.UKFConfig{Augment: true})},
		{"ukf/hv", asNoiseArgs(cv), cv, cx, cp, ukf(filters.UKFConfig{})},
		{"ukf/manifold", withEuclidean(cv), cv, cx, cp, ukf(filters.UKFConfig{})},
		{"ckf", cv, nil, cx, cp, func(m *filters.Model) (filters.Filter, error) { return filters.NewCKF(m, filters.CKFConfig{}) }},
		{"ghkf", cv, nil, cx, cp, func(m *filters.Model) (filters.Filter, error) { return filters.NewGHKF(m, filters.GHKFConfig{}) }},
		{"srukf/ct", ct, nil, tx, tp, func(m *filters.Model) (filters.Filter, error) { return filters.NewSRUKF(m, filters.SRUKFConfig{}) }},
		{"pf", cv, nil, cx, cp, pf},
		{"pf/scalar", rw, nil, []float64{0}, []float64{4}, pf},
		{"pf/measloglik", withGaussLogLik(cv), cv, cx, cp, pf},
		{"pf/hv", rwHV, rw, []float64{0}, []float64{4}, pf},
		{"apf", cv, nil, cx, cp, func(m *filters.Model) (filters.Filter, error) {
			return filters.NewAPF(m, filters.APFConfig{Particles: 300})
		}},
		{"apf/hv", rwHV, rw, []float64{0}, []float64{4}, func(m *filters.Model) (filters.Filter, error) {
			return filters.NewAPF(m, filters.APFConfig{Particles: 300})
		}},
		{"rpf", cv, nil, cx, cp, func(m *filters.Model) (filters.Filter, error) {
			return filters.NewRPF(m, filters.RPFConfig{Particles: 300})
		}},
		{"enkf", cv, nil, cx, cp, enkf},
		{"enkf/scalar", rw, nil, []float64{0}, []float64{4}, enkf},
	}
}

// A model whose RAt reports R itself at every step is the model without
// RAt: every filter gives bit-identical means, covariances, innovations
// and innovation covariances, on the same data and random stream. (A
// filter with RAt factors the step's R where it otherwise uses the factor
// of R made at set-up; the same routine on the same matrix gives the same
// factor.) Steps 4, 11, 18, ... have no measurement.
func TestRAtConstantIsR(t *testing.T) {
	const steps = 30
	for _, c := range ratCases() {
		t.Run(c.name, func(t *testing.T) {
			sim := c.sim
			if sim == nil {
				sim = c.m
			}
			_, zs := filtertest.Simulate(sim, c.x0, steps, rand.New(rand.NewPCG(41, 1)))
			a, err := c.mk(c.m)
			if err != nil {
				t.Fatal(err)
			}
			b, err := c.mk(withConstRAt(c.m))
			if err != nil {
				t.Fatal(err)
			}
			nx, nd, nz := c.m.Nx, c.m.Nd(), c.m.Nz
			xa, pa, xb, pb := make([]float64, nx), make([]float64, nd*nd), make([]float64, nx), make([]float64, nd*nd)
			nua, sa, nub, sb := make([]float64, nz), make([]float64, nz*nz), make([]float64, nz), make([]float64, nz*nz)
			for i, f := range []filters.Filter{a, b} {
				if err := f.Reset(c.x0, c.p0, rand.New(rand.NewPCG(42, 1))); err != nil {
					t.Fatalf("filter %d: Reset: %v", i, err)
				}
			}
			for k := 1; k <= steps; k++ {
				z := zs[k-1]
				if k%7 == 4 {
					z = nil
				}
				for i, f := range []filters.Filter{a, b} {
					if err := f.Predict(k); err != nil {
						t.Fatalf("filter %d: step %d: Predict: %v", i, k, err)
					}
					if err := f.Update(z, k); err != nil {
						t.Fatalf("filter %d: step %d: Update: %v", i, k, err)
					}
				}
				a.EstimateTo(xa, pa)
				b.EstimateTo(xb, pb)
				if !sameBits(xa, xb) || !sameBits(pa, pb) {
					t.Fatalf("step %d: with RAt %v %v, without %v %v", k, xb, pb, xa, pa)
				}
				ia, ib := a.(filters.Innovator), b.(filters.Innovator)
				ha, hb := ia.InnovationTo(nua, sa), ib.InnovationTo(nub, sb)
				if ha != hb || (ha && (!sameBits(nua, nub) || !sameBits(sa, sb))) {
					t.Fatalf("step %d: innovation with RAt %v %v %v, without %v %v %v", k, hb, nub, sb, ha, nua, sa)
				}
			}
		})
	}
}

func sameBits(a, b []float64) bool {
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			return false
		}
	}
	return len(a) == len(b)
}

// Every filter's steps stay allocation-free with a per-step R (the
// varying R of CV2DVaryingR, written into the same workspace each step).
func TestRAtNoAllocs(t *testing.T) {
	for _, c := range ratCases() {
		t.Run(c.name, func(t *testing.T) {
			m := *c.m
			m.RAt = func(dst []float64, k int) bool {
				if k%3 == 0 {
					return false
				}
				copy(dst, c.m.R)
				for i := 0; i < c.m.Nz; i++ {
					dst[i*c.m.Nz+i] *= 1 + 0.5*float64(k%4)
				}
				return true
			}
			f, err := c.mk(&m)
			if err != nil {
				t.Fatal(err)
			}
			filtertest.NoAllocs(t, f, &m, c.x0, c.p0, nil)
		})
	}
}

// A per-step R far from positive definite (−10⁹ I) is a numerical failure
// of that step, ErrNotPosDef, not a panic: the filters that factor R
// (srukf, augmented sigma points, pf, enkf) fail there, and the others at
// the Cholesky factorization of S = C P Cᵀ + R, which is then negative.
func TestRAtNotPosDef(t *testing.T) {
	for _, c := range ratCases() {
		if c.m.MeasLogLik != nil && c.m.HV == nil {
			continue // R only enters S, a moment, and is not factored
		}
		t.Run(c.name, func(t *testing.T) {
			m := *c.m
			m.RAt = func(dst []float64, k int) bool {
				clear(dst)
				for i := 0; i < m.Nz; i++ {
					dst[i*m.Nz+i] = -1e9
				}
				return true
			}
			f, err := c.mk(&m)
			if err != nil {
				t.Fatal(err)
			}
			if err := f.Reset(c.x0, c.p0, rand.New(rand.NewPCG(1, 1))); err != nil {
				t.Fatal(err)
			}
			if err := f.Predict(1); err != nil {
				t.Fatal(err)
			}
			z := make([]float64, m.Nz)
			m.H(z, c.x0, 1)
			if err := f.Update(z, 1); err != filters.ErrNotPosDef {
				t.Errorf("Update with R = −1e9 I: %v, want ErrNotPosDef", err)
			}
		})
	}
}

// whitened returns the model m (linear, with RAt) written in whitened
// measurements for the steps 1..steps: with R_k = L_k L_kᵀ (Cholesky, by
// gonum), z'_k = L_k⁻¹ z_k, H'_k = L_k⁻¹ H and R' = I, and the factors
// L_k. This is the standard whitening transformation (common practice,
// no source cited): z' = L⁻¹ z is an invertible linear change of the
// measurement coordinates, under which the Kalman update is unchanged
// (K' z' = P Cᵀ L⁻ᵀ (L⁻¹ S L⁻ᵀ)⁻¹ L⁻¹ z = P Cᵀ S⁻¹ z = K z, and likewise
// for the covariance), so for the Kalman filter it is an exact identity.
func whitened(t *testing.T, m *filters.Model, steps int) (*filters.Model, []*mat.TriDense) {
	t.Helper()
	nz, nx := m.Nz, m.Nx
	ls := make([]*mat.TriDense, steps+1)
	cs := make([][]float64, steps+1) // L_k⁻¹ C
	c := make([]float64, nz*nx)
	m.HJac(c, make([]float64, nx), 1)
	for k := 1; k <= steps; k++ {
		var ch mat.Cholesky
		if !ch.Factorize(mat.NewSymDense(nz, filtertest.RAtOrR(m, k))) {
			t.Fatalf("step %d: R not positive definite", k)
		}
		l := mat.NewTriDense(nz, mat.Lower, nil)
		ch.LTo(l)
		ls[k] = l
		var w mat.Dense
		if err := w.Solve(l, mat.NewDense(nz, nx, c)); err != nil {
			t.Fatal(err)
		}
		cs[k] = w.RawMatrix().Data
		if w.RawMatrix().Stride != nx {
			t.Fatal("unexpected stride")
		}
	}
	w := *m
	w.RAt = nil
	w.R = make([]float64, nz*nz)
	for i := 0; i < nz; i++ {
		w.R[i*nz+i] = 1
	}
	w.HMany = nil
	w.HJac = func(dst, _ []float64, k int) { copy(dst, cs[k]) }
	w.H = func(dst, x []float64, k int) {
		for i := 0; i < nz; i++ {
			var s float64
			for j := 0; j < nx; j++ {
				s += cs[k][i*nx+j] * x[j]
			}
			dst[i] = s
		}
	}
	return &w, ls
}

// The Kalman filter with a per-step R (CV2DVaryingR: correlated, varying
// variances, and steps that fall back to R) equals the Kalman filter of
// the whitened model (whitened) at every step: the same mean and
// covariance, S_k = L_k S'_k L_kᵀ and ν_k = L_k ν'_k; and the
// log-likelihoods differ by the Jacobian of the change of variables,
// log p(z) = log p(z') − Σ_k log det L_k. Steps 5, 14, 23, ... have no
// measurement. Tolerance 1e-10 absolute or relative: the two compute the
// same quantities in different coordinates, so they differ by rounding
// only (we measured below 1e-13).
func TestKFVaryingRIsWhitenedKF(t *testing.T) {
	const steps = 60
	m := filtertest.CV2DVaryingR(0.5, 4)
	x0, p0 := filtertest.CV2DPrior()
	rng := rand.New(rand.NewPCG(31, 7))
	xt := make([]float64, 4)
	filtertest.Gaussian(xt, x0, p0, rng)
	_, zs := filtertest.Simulate(m, xt, steps, rng)
	w, ls := whitened(t, m, steps)
	a, b := newKF(t, m), newKF(t, w)
	for _, f := range []*filters.KF{a, b} {
		if err := f.Reset(x0, p0, nil); err != nil {
			t.Fatal(err)
		}
	}
	const tol = 1e-10
	near := func(what string, k int, got, want []float64) {
		t.Helper()
		for i := range want {
			if !scalar.EqualWithinAbsOrRel(got[i], want[i], tol, tol) {
				t.Fatalf("step %d: %s[%d] = %.17g, whitened %.17g", k, what, i, got[i], want[i])
			}
		}
	}
	xa, pa, xb, pb := make([]float64, 4), make([]float64, 16), make([]float64, 4), make([]float64, 16)
	nua, sa, nub, sb := make([]float64, 2), make([]float64, 4), make([]float64, 2), make([]float64, 4)
	var logdet float64
	updates := 0
	for k := 1; k <= steps; k++ {
		z := zs[k-1]
		var zw []float64
		if k%9 != 5 {
			var v mat.VecDense
			if err := v.SolveVec(ls[k], mat.NewVecDense(2, append([]float64(nil), z...))); err != nil {
				t.Fatal(err)
			}
			zw = []float64{v.AtVec(0), v.AtVec(1)}
			logdet += math.Log(ls[k].At(0, 0)) + math.Log(ls[k].At(1, 1))
			updates++
		} else {
			z = nil
		}
		if err := a.Predict(k); err != nil {
			t.Fatal(err)
		}
		if err := b.Predict(k); err != nil {
			t.Fatal(err)
		}
		if err := a.Update(z, k); err != nil {
			t.Fatal(err)
		}
		if err := b.Update(zw, k); err != nil {
			t.Fatal(err)
		}
		a.EstimateTo(xa, pa)
		b.EstimateTo(xb, pb)
		near("mean", k, xa, xb)
		near("cov", k, pa, pb)
		if z == nil {
			continue
		}
		if !a.InnovationTo(nua, sa) || !b.InnovationTo(nub, sb) {
			t.Fatalf("step %d: no innovation", k)
		}
		var lnu mat.VecDense
		lnu.MulVec(ls[k], mat.NewVecDense(2, nub))
		near("innovation", k, nua, lnu.RawVector().Data)
		var ls2 mat.Dense
		ls2.Mul(ls[k], mat.NewDense(2, 2, sb))
		ls2.Mul(&ls2, ls[k].T())
		near("S", k, sa, []float64{ls2.At(0, 0), ls2.At(0, 1), ls2.At(1, 0), ls2.At(1, 1)})
	}
	if updates < 50 {
		t.Fatalf("only %d updates", updates)
	}
	if got, want := a.LogLikelihood(), b.LogLikelihood()-logdet; !scalar.EqualWithinAbsOrRel(got, want, tol, tol) {
		t.Errorf("log-likelihood %.17g, whitened minus Σ log det L %.17g", got, want)
	}
	// The per-step R matters: the plain CV2D KF on the same data differs.
	c := newKF(t, filtertest.CV2D(0.5, 4))
	if err := c.Reset(x0, p0, nil); err != nil {
		t.Fatal(err)
	}
	for k := 1; k <= steps; k++ {
		z := zs[k-1]
		if k%9 == 5 {
			z = nil
		}
		if err := c.Predict(k); err != nil {
			t.Fatal(err)
		}
		if err := c.Update(z, k); err != nil {
			t.Fatal(err)
		}
	}
	c.EstimateTo(xb, pb)
	if scalar.EqualWithinAbsOrRel(pa[0], pb[0], 1e-3, 1e-3) {
		t.Errorf("P[0,0] with the per-step R %v equals that with R %v", pa[0], pb[0])
	}
}

// Every sigma-point and linearised Gaussian filter equals the Kalman
// filter on a linear-Gaussian model whose measurement noise varies from
// step to step (filtertest.EqualsKFVaryingR), as with a fixed R: the
// identity holds step by step for whatever R the step has (Julier 2002;
// Wan & van der Merwe 2000, as in TestUKFEqualsKF). Tolerances as in the
// fixed-R checks of each filter.
func TestGaussianFiltersVaryingREqualKF(t *testing.T) {
	cases := []struct {
		name string
		tol  float64
		mk   func(m *filters.Model) (filters.Filter, error)
	}{
		{"kf", 0, func(m *filters.Model) (filters.Filter, error) { return filters.NewKF(m, filters.KFConfig{}) }},
		{"ekf", 1e-9, func(m *filters.Model) (filters.Filter, error) { return filters.NewEKF(m, filters.EKFConfig{}) }},
		{"iekf", 1e-9, func(m *filters.Model) (filters.Filter, error) { return filters.NewIEKF(m, filters.IEKFConfig{}) }},
		{"ckf", 1e-9, func(m *filters.Model) (filters.Filter, error) { return filters.NewCKF(m, filters.CKFConfig{}) }},
		{"ghkf", 1e-9, func(m *filters.Model) (filters.Filter, error) { return filters.NewGHKF(m, filters.GHKFConfig{}) }},
		{"srukf", 1e-9, func(m *filters.Model) (filters.Filter, error) { return filters.NewSRUKF(m, filters.SRUKFConfig{}) }},
		{"ukf/hv", 1e-9, func(m *filters.Model) (filters.Filter, error) {
			return filters.NewUKF(asNoiseArgs(m), filters.UKFConfig{})
		}},
	}
	for _, cfg := range append(ukfConfigs,
		filters.UKFConfig{Points: filters.PointsSymmetric},
		filters.UKFConfig{Points: filters.PointsSimplex, W0: 0.25},
		filters.UKFConfig{Augment: true},
		filters.UKFConfig{Points: filters.PointsSimplex, Augment: true}) {
		tol := 1e-9
		if cfg.Alpha < 0.01 && cfg.Alpha != 0 {
			tol = 5e-9 // as TestUKFEqualsKF
		}
		cases = append(cases, struct {
			name string
			tol  float64
			mk   func(m *filters.Model) (filters.Filter, error)
		}{fmt.Sprintf("ukf/points=%s/alpha=%g/beta=%g/kappa=%g/augment=%v", cfg.Points, cfg.Alpha, cfg.Beta, cfg.Kappa, cfg.Augment), tol,
			func(m *filters.Model) (filters.Filter, error) { return filters.NewUKF(m, cfg) }})
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			filtertest.EqualsKFVaryingR(t, func(m *filters.Model) filters.Filter {
				f, err := c.mk(m)
				if err != nil {
					t.Fatal(err)
				}
				return f
			}, c.tol)
		})
	}
}

// varyingRCases are the problems of the convergence checks with a per-step
// R: CV2DVaryingR, and the scalar random walk (R = 2) whose RAt gives
// 2·(0.25 + 0.5·(k mod 5)) except at every fourth step (R).
func varyingRCases() []kfCase {
	cvx0, cvp0 := filtertest.CV2DPrior()
	rw := scalarRW(1, 2)
	rw.RAt = func(dst []float64, k int) bool {
		if k%4 == 0 {
			return false
		}
		dst[0] = 2 * (0.25 + 0.5*float64(k%5))
		return true
	}
	return []kfCase{
		{"cv2d-varying-r", filtertest.CV2DVaryingR(0.5, 4), cvx0, cvp0, []uint64{11, 12, 13, 14, 15, 16}},
		{"randomwalk-varying-r", rw, []float64{0}, []float64{4}, []uint64{21, 22, 23, 24, 25, 26, 27, 28, 29, 30}},
	}
}

// With a per-step R the particle filters and the EnKF converge to the
// Kalman filter (with the same RAt) at the Monte Carlo rate, as with a
// fixed R: the slopes and bounds of TestPFApproachesKF (pf, apf) and
// TestEnKFApproachesKF (enkf), on varyingRCases. The data are simulated
// with the per-step R.
func TestMonteCarloVaryingRApproachesKF(t *testing.T) {
	pfLimit := func(c kfCase, last gap) kfLimit {
		nx, nz := float64(c.m.Nx), float64(c.m.Nz)
		return kfLimit{-1.3, -0.7, [4]float64{20 * nx / 1e4, 20 * nz / 1e4, 10 * last.iidP / 1e4, 10 * last.iidS / 1e4}}
	}
	t.Run("pf", func(t *testing.T) {
		checkApproachesKFOn(t, varyingRCases(), func(m *filters.Model, n int) filters.Filter {
			return newPF(t, m, filters.PFConfig{Particles: n})
		}, pfLimit)
	})
	t.Run("apf", func(t *testing.T) {
		checkApproachesKFOn(t, varyingRCases(), func(m *filters.Model, n int) filters.Filter {
			return newAPF(t, m, filters.APFConfig{Particles: n})
		}, pfLimit)
	})
	t.Run("enkf", func(t *testing.T) {
		checkApproachesKFOn(t, varyingRCases(), func(m *filters.Model, n int) filters.Filter {
			return newEnKF(t, m, filters.EnKFConfig{Members: n})
		}, func(c kfCase, last gap) kfLimit {
			nx, nz := float64(c.m.Nx), float64(c.m.Nz)
			return kfLimit{-1.3, -0.7, [4]float64{5 * nx / 1e4, 5 * nz / 1e4, 3 * last.iidP / 1e4, 3 * last.iidS / 1e4}}
		})
	})
}
