package datasets

import (
	"math"
	"testing"
)

// Stationary moments of the stochastic volatility model (Kim, Shephard &
// Chib 1998 §1; closed forms derived from the model): x is a stationary
// AR(1), so Var x = σ_η²/(1-φ²); y = e^{x/2} ε gives E[y²] = E[e^x] =
// exp(μ + σ_x²/2) and E[y⁴] = 3 exp(2μ + 2σ_x²), so the kurtosis is
// 3 exp(σ_x²) (5.32 at the defaults). The prior
// is the stationary law, so x_1 of independent runs are independent draws.
// Each sample moment is compared with its value within 5 standard errors,
// the standard error computed from the closed-form higher moments (5σ is
// common practice with no source; the seed is fixed).
func TestStochVolStationaryMoments(t *testing.T) {
	const runs = 100000
	p, err := NewStochVol(StochVolConfig{Steps: 1})
	if err != nil {
		t.Fatal(err)
	}
	mu, phi, se := 2*math.Log(0.648), 0.978, 0.158
	vx := se * se / (1 - phi*phi)
	var seq Sequence
	rng := newRNG(51, 52)
	var sx, sxx, sy2, sy4 float64
	for r := 0; r < runs; r++ {
		p.Run(&seq, rng)
		x, y := seq.Truth[0]-mu, seq.Z[0]
		sx += x
		sxx += x * x
		sy2 += y * y
		sy4 += y * y * y * y
	}
	N := float64(runs)
	check := func(what string, got, want, se float64) {
		t.Helper()
		if math.Abs(got-want) > 5*se {
			t.Errorf("%s = %v, want %v ± %v", what, got, want, 5*se)
		}
	}
	check("E[x - μ]", sx/N, 0, math.Sqrt(vx/N))
	check("Var x", sxx/N, vx, vx*math.Sqrt(2/N))
	ey2 := math.Exp(mu + vx/2)
	ey4 := 3 * math.Exp(2*mu+2*vx)
	check("E[y²]", sy2/N, ey2, math.Sqrt((ey4-ey2*ey2)/N))
	ey8 := 105 * math.Exp(4*mu+8*vx) // E[ε⁸] = 105, E[e^{4x}] = exp(4μ + 8σ_x²)
	check("E[y⁴]", sy4/N, ey4, math.Sqrt((ey8-ey4*ey4)/N))
}

// The log-squared form (Harvey, Ruiz & Shephard 1994): z - x = log ε² has
// mean ψ(1/2) + ln 2 = -1.2704 and variance π²/2 = 4.9348 (Abramowitz &
// Stegun 1964, 6.3.3 and 6.4.4), which are Model.H's offset and Model.R;
// the sample moments agree within 5 standard errors (the fourth central
// moment of log χ²₁ is ψ⁽³⁾(1/2) + 3 (π²/2)² = π⁴ + 3π⁴/4, from the values of
// the polygamma functions at 1/2 in A&S §6.4).
func TestStochVolLogSquared(t *testing.T) {
	p, err := NewStochVol(StochVolConfig{LogSquared: true})
	if err != nil {
		t.Fatal(err)
	}
	if !near(logChi2Mean, -1.2703628454614782, 0, 1e-15) || !near(p.Model.R[0], 4.934802200544679, 0, 1e-15) {
		t.Fatalf("offset %v, R %v", logChi2Mean, p.Model.R)
	}
	var seq Sequence
	rng := newRNG(53, 54)
	var s, ss float64
	n := 0
	for r := 0; r < 200; r++ {
		p.Run(&seq, rng)
		for k := 1; k <= seq.Steps; k++ {
			u := seq.Meas(k)[0] - seq.State(k)[0]
			s += u
			ss += u * u
			n++
		}
	}
	N := float64(n)
	mean := s / N
	v := ss/N - mean*mean
	m4 := math.Pow(math.Pi, 4) * (1 + 0.75)
	if math.Abs(mean-logChi2Mean) > 5*math.Sqrt(logChi2Var/N) {
		t.Errorf("mean of log ε² = %v, want %v", mean, logChi2Mean)
	}
	if math.Abs(v-logChi2Var) > 5*math.Sqrt((m4-logChi2Var*logChi2Var)/N) {
		t.Errorf("variance of log ε² = %v, want %v", v, logChi2Var)
	}
	z := make([]float64, 1)
	p.Model.H(z, []float64{0.3}, 1)
	if !near(z[0], 0.3+logChi2Mean, 0, 1e-15) {
		t.Errorf("H(0.3) = %v", z[0])
	}
}

// The exact measurement densities are normalised (a property of any
// density): ∫ p(y | x) dy = 1 and ∫ p(z | x) dz = 1, by the trapezoidal
// rule on a fine grid; and the returns density equals the normal density of
// y with variance e^x (closed form).
func TestStochVolDensities(t *testing.T) {
	ret, _ := NewStochVol(StochVolConfig{})
	lsq, _ := NewStochVol(StochVolConfig{LogSquared: true})
	for _, x := range []float64{-3, -0.868, 0, 1.5} {
		xs := []float64{x}
		sd := math.Exp(x / 2)
		integ := func(ll func(z, x []float64, k int) float64, lo, hi float64) float64 {
			const n = 200000
			h := (hi - lo) / n
			var s float64
			for i := 0; i <= n; i++ {
				w := 1.0
				if i == 0 || i == n {
					w = 0.5
				}
				s += w * math.Exp(ll([]float64{lo + float64(i)*h}, xs, 1))
			}
			return s * h
		}
		if v := integ(ret.Model.MeasLogLik, -12*sd, 12*sd); !near(v, 1, 1e-9, 0) {
			t.Errorf("x=%v: ∫ p(y|x) dy = %v", x, v)
		}
		if v := integ(lsq.Model.MeasLogLik, x-60, x+5); !near(v, 1, 1e-9, 0) {
			t.Errorf("x=%v: ∫ p(z|x) dz = %v", x, v)
		}
		y := 0.7
		want := -0.5*math.Log(2*math.Pi*sd*sd) - y*y/(2*sd*sd)
		if got := ret.Model.MeasLogLik([]float64{y}, xs, 1); !near(got, want, 1e-14, 1e-14) {
			t.Errorf("x=%v: log p(%v|x) = %v, want %v", x, y, got, want)
		}
		hv := make([]float64, 1)
		ret.Model.HV(hv, xs, []float64{1.3}, 1)
		if !near(hv[0], sd*1.3, 0, 1e-15) {
			t.Errorf("HV = %v", hv[0])
		}
	}
	if ret.Traits.AdditiveNoise || ret.Model.Additive() || !lsq.Traits.Linear || !lsq.Model.Linear {
		t.Fatalf("traits %+v / %+v", ret.Traits, lsq.Traits)
	}
	for _, cfg := range []StochVolConfig{{Phi: 1}, {Phi: -1.5}, {Beta: -1}, {SigmaEta: math.NaN()}, {Steps: -1}} {
		if _, err := NewStochVol(cfg); err == nil {
			t.Errorf("NewStochVol(%+v) gave no error", cfg)
		}
	}
}
