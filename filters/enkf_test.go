package filters_test

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/estbench/estbench/filters"
	"github.com/estbench/estbench/filters/filtertest"
)

func newEnKF(t testing.TB, m *filters.Model, cfg filters.EnKFConfig) *filters.EnKF {
	t.Helper()
	f, err := filters.NewEnKF(m, cfg)
	if err != nil {
		t.Fatalf("NewEnKF: %v", err)
	}
	return f
}

// On a linear-Gaussian model the ensemble mean and covariance of the
// perturbed-observation EnKF converge to the kf's at the Monte Carlo rate
// (Mandel, Cobb & Beezley 2011, "On the convergence of the ensemble Kalman
// filter", Applications of Mathematics 56(6); Le Gland, Monbet & Tran 2011,
// "Large sample asymptotics for the ensemble Kalman filter", in Crisan &
// Rozovskii (eds.), "The Oxford Handbook of Nonlinear Filtering"; from
// memory): each gap falls like 1/N, slope in [-1.3, -0.7] as for the pf.
// The members have equal weights and are close to N draws from the
// posterior, so the bounds at N = 10000 are tighter than the pf's:
// 5·Nx/N and 5·Nz/N for the means, 3 times the iid value for the
// covariances (our choice; we measured about 8 of 20 for the CV2D mean
// and 0.75 of 3 times iid for its covariance).
func TestEnKFApproachesKF(t *testing.T) {
	checkApproachesKF(t, func(m *filters.Model, n int) filters.Filter {
		return newEnKF(t, m, filters.EnKFConfig{Members: n})
	}, func(c kfCase, last gap) kfLimit {
		nx, nz := float64(c.m.Nx), float64(c.m.Nz)
		return kfLimit{-1.3, -0.7, [4]float64{5 * nx / 1e4, 5 * nz / 1e4, 3 * last.iidP / 1e4, 3 * last.iidS / 1e4}}
	})
}

// Multiplicative inflation by r multiplies the forecast deviations about
// the ensemble mean by r (Anderson & Anderson 1999, "A Monte Carlo
// implementation of the nonlinear filtering problem to produce ensemble
// assimilations and forecasts", Monthly Weather Review 127(12), from
// memory), so it keeps the forecast mean and multiplies the forecast
// covariance by r². It draws nothing, so with the same stream the two
// forecasts agree to rounding.
func TestEnKFInflation(t *testing.T) {
	m := filtertest.CV2D(0.5, 4)
	x0, p0 := filtertest.CV2DPrior()
	const r = 1.3
	plain := newEnKF(t, m, filters.EnKFConfig{Members: 50})
	infl := newEnKF(t, m, filters.EnKFConfig{Members: 50, Inflation: r})
	xa, pa := make([]float64, 4), make([]float64, 16)
	xb, pb := make([]float64, 4), make([]float64, 16)
	for _, f := range []*filters.EnKF{plain, infl} {
		if err := f.Reset(x0, p0, rand.New(rand.NewPCG(4, 4))); err != nil {
			t.Fatal(err)
		}
		if err := f.Predict(1); err != nil {
			t.Fatal(err)
		}
	}
	plain.EstimateTo(xa, pa)
	infl.EstimateTo(xb, pb)
	for i := range xa {
		if math.Abs(xb[i]-xa[i]) > 1e-12*(1+math.Abs(xa[i])) {
			t.Errorf("mean[%d] = %v, without inflation %v", i, xb[i], xa[i])
		}
	}
	for i := range pa {
		if math.Abs(pb[i]-r*r*pa[i]) > 1e-12*(1+math.Abs(pa[i])) {
			t.Errorf("cov[%d] = %v, want r² × %v = %v", i, pb[i], pa[i], r*r*pa[i])
		}
	}
	for _, cfg := range []filters.EnKFConfig{{Members: 1}, {Inflation: 0.9}, {Inflation: math.Inf(1)}} {
		if _, err := filters.NewEnKF(m, cfg); err == nil {
			t.Errorf("config %+v accepted", cfg)
		}
	}
}

// The analysis of one update, against the kf formulas on the ensemble's
// own forecast: with a forecast ensemble of mean x̄ and covariance Pf the
// mean of the analysed members is x̄ + K (z − H x̄) + K v̄ (v̄ the mean of
// the perturbations), with K = Pf Hᵀ (H Pf Hᵀ + R)⁻¹ (Evensen 2003,
// the analysis with perturbed observations; Burgers, van Leeuwen
// & Evensen 1998, "Analysis scheme in the ensemble Kalman filter", Monthly
// Weather Review 126(6)), so it is within 5·sqrt((K R Kᵀ)_jj / N) of the
// first terms; and the innovation covariance it reports is H Pf Hᵀ + R.
func TestEnKFAnalysis(t *testing.T) {
	m := filtertest.CV2D(0.5, 4)
	x0, p0 := filtertest.CV2DPrior()
	const n = 4000
	f := newEnKF(t, m, filters.EnKFConfig{Members: n})
	if err := f.Reset(x0, p0, rand.New(rand.NewPCG(2, 9))); err != nil {
		t.Fatal(err)
	}
	if err := f.Predict(1); err != nil {
		t.Fatal(err)
	}
	xf, pf := make([]float64, 4), make([]float64, 16)
	f.EstimateTo(xf, pf)
	z := []float64{5, -3}
	if err := f.Update(z, 1); err != nil {
		t.Fatal(err)
	}
	xa := make([]float64, 4)
	f.EstimateTo(xa, nil)
	// CV2D measures components 0 and 2, with R = 4 I.
	s := [4]float64{pf[0] + 4, pf[2], pf[8], pf[10] + 4}
	nu, sg := make([]float64, 2), make([]float64, 4)
	if !f.InnovationTo(nu, sg) {
		t.Fatal("no innovation")
	}
	for i := range s {
		if math.Abs(sg[i]-s[i]) > 1e-9*math.Abs(s[i])+1e-12 {
			t.Errorf("S[%d] = %v, want H Pf Hᵀ + R = %v", i, sg[i], s[i])
		}
	}
	det := s[0]*s[3] - s[1]*s[2]
	si := [4]float64{s[3] / det, -s[1] / det, -s[2] / det, s[0] / det}
	d := [2]float64{z[0] - xf[0], z[1] - xf[2]}
	if math.Abs(nu[0]-d[0]) > 1e-9 || math.Abs(nu[1]-d[1]) > 1e-9 {
		t.Errorf("innovation %v, want z − H x̄ = %v", nu, d)
	}
	for j := 0; j < 4; j++ {
		k0 := pf[j*4+0]*si[0] + pf[j*4+2]*si[2]
		k1 := pf[j*4+0]*si[1] + pf[j*4+2]*si[3]
		want := xf[j] + k0*d[0] + k1*d[1]
		krk := 4 * (k0*k0 + k1*k1)
		if tol := 5 * math.Sqrt(krk/n); math.Abs(xa[j]-want) > tol {
			t.Errorf("analysis mean[%d] = %v, want %v ± %.3g", j, xa[j], want, tol)
		}
	}
}

// Conformance: no allocation (with and without inflation), a missing
// measurement keeps the forecast, the same stream gives the same
// estimates; EnKF needs additive measurement noise; a model given with FW
// = F + w draws the same noise and gives bit-identical results.
func TestEnKFConformance(t *testing.T) {
	cv := filtertest.CV2D(0.5, 4)
	cx, cp := filtertest.CV2DPrior()
	ug := ungmModel()
	for _, r := range []float64{1, 1.1} {
		cfg := filters.EnKFConfig{Members: 100, Inflation: r}
		filtertest.NoAllocs(t, newEnKF(t, cv, cfg), cv, cx, cp, nil)
		filtertest.NoAllocs(t, newEnKF(t, ug, cfg), ug, []float64{0.5}, []float64{5}, nil)
	}
	filtertest.HandlesMissing(t, newEnKF(t, cv, filters.EnKFConfig{}), cv, cx, cp)
	checkDeterministic(t, func() filters.Filter { return newEnKF(t, ug, filters.EnKFConfig{}) })

	hv := *cv
	hv.Nv = 2
	hv.HV = func(dst, x, v []float64, _ int) { dst[0], dst[1] = x[0]+v[0], x[2]+v[1] }
	if _, err := filters.NewEnKF(&hv, filters.EnKFConfig{}); err == nil {
		t.Error("NewEnKF accepts non-additive measurement noise")
	}
	checkSameAsFW(t, cv, func(m *filters.Model) filters.Filter { return newEnKF(t, m, filters.EnKFConfig{Members: 50}) })
}

// checkSameAsFW runs the filter made by newF on CV2D and on CV2D given as
// FW(x, w) = F(x) + w, with the same stream, and fails unless every
// estimate is bit-identical (both draw w = L e with the same L).
func checkSameAsFW(t *testing.T, cv *filters.Model, newF func(m *filters.Model) filters.Filter) {
	t.Helper()
	fw := *cv
	fw.FMany = nil
	fw.Nw = 4
	fw.FW = func(dst, x, w []float64, k int) {
		cv.F(dst, x, k)
		for i := range dst {
			dst[i] += w[i]
		}
	}
	x0, p0 := filtertest.CV2DPrior()
	_, zs := filtertest.Simulate(cv, x0, 20, rand.New(rand.NewPCG(6, 6)))
	a, b := newF(cv), newF(&fw)
	xa, pa := make([]float64, 4), make([]float64, 16)
	xb, pb := make([]float64, 4), make([]float64, 16)
	for _, f := range []filters.Filter{a, b} {
		if err := f.Reset(x0, p0, rand.New(rand.NewPCG(7, 7))); err != nil {
			t.Fatal(err)
		}
	}
	for k := 1; k <= 20; k++ {
		for _, f := range []filters.Filter{a, b} {
			if err := f.Predict(k); err != nil {
				t.Fatal(err)
			}
			if err := f.Update(zs[k-1], k); err != nil {
				t.Fatal(err)
			}
		}
		a.EstimateTo(xa, pa)
		b.EstimateTo(xb, pb)
		for i := range pa {
			if (i < 4 && xa[i] != xb[i]) || pa[i] != pb[i] {
				t.Fatalf("step %d: FW model gives %v %v, additive %v %v", k, xb, pb, xa, pa)
			}
		}
	}
}
