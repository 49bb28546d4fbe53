package filters_test

import (
	"fmt"
	"math"
	"testing"

	"github.com/estbench/estbench/filters"
)

// polarMoments returns the exact mean and covariance of (r cos θ, r sin θ)
// for independent r ~ N(rm, sr²), θ ~ N(tm, st²). With E[cos θ] =
// cos tm·e^{−st²/2}, E[sin θ] = sin tm·e^{−st²/2} (the characteristic
// function of the normal), E[cos²θ] = (1 + cos 2tm·e^{−2st²})/2,
// E[sin²θ] = (1 − cos 2tm·e^{−2st²})/2, E[sin θ cos θ] = sin 2tm·e^{−2st²}/2
// and E[r²] = rm² + sr² (derived here):
//
//	mean = rm e^{−st²/2} (cos tm, sin tm)
//	Var x = E[r²] E[cos²θ] − rm² cos²tm e^{−st²}
//	Var y = E[r²] E[sin²θ] − rm² sin²tm e^{−st²}
//	Cov xy = E[r²] E[sinθ cosθ] − rm² sin tm cos tm e^{−st²}
func polarMoments(rm, sr, tm, st float64) (mean, cov []float64) {
	e1 := math.Exp(-st * st / 2)
	e2 := math.Exp(-2 * st * st)
	er2 := rm*rm + sr*sr
	c, s := math.Cos(tm), math.Sin(tm)
	c2, s2 := math.Cos(2*tm), math.Sin(2*tm)
	mean = []float64{rm * e1 * c, rm * e1 * s}
	vx := er2*(1+c2*e2)/2 - rm*rm*c*c*e1*e1
	vy := er2*(1-c2*e2)/2 - rm*rm*s*s*e1*e1
	cxy := er2*s2*e2/2 - rm*rm*s*c*e1*e1
	return mean, []float64{vx, cxy, cxy, vy}
}

// polarLinear is the first-order (EKF-style) approximation: mean g(x̄),
// covariance J diag(sr², st²) Jᵀ.
func polarLinear(rm, sr, tm, st float64) (mean, cov []float64) {
	c, s := math.Cos(tm), math.Sin(tm)
	j := [4]float64{c, -rm * s, s, rm * c}
	cov = make([]float64, 4)
	v := [2]float64{sr * sr, st * st}
	for a := 0; a < 2; a++ {
		for b := 0; b < 2; b++ {
			cov[a*2+b] = j[a*2]*v[0]*j[b*2] + j[a*2+1]*v[1]*j[b*2+1]
		}
	}
	return []float64{rm * c, rm * s}, cov
}

func dist(a, b []float64) float64 {
	var s float64
	for i := range a {
		s += (a[i] - b[i]) * (a[i] - b[i])
	}
	return math.Sqrt(s)
}

// The polar-to-Cartesian conversion, the example of Julier & Uhlmann 1997,
// "A new extension of the Kalman filter to nonlinear systems" (r̄ = 1,
// σr = 0.02, θ̄ = 90°, with a wide bearing spread): the unscented transform
// is closer to the exact moments than linearisation, whose mean is badly
// biased (by r̄(1 − e^{−σθ²/2}): 0.034 at 15°, 0.13 at 30°).
//
// The UT mean is also known in closed form (derived here from the weights
// of Julier 2002, "The scaled unscented transformation"; P is diagonal so
// the sigma points lie on the axes): with a² = n+λ = α²(n+κ) and
// Wᵢ = 1/(2a²), the pairs (θ̄ ± aσθ) average cos θ̄·cos(aσθ), so
//
//	ȳ = r̄ (1 − 2Wᵢ + 2Wᵢ cos(aσθ)) (cos θ̄, sin θ̄),
//
// whatever β (which only weights the covariance).
//
// Expanding, its error against the exact r̄e^{−σθ²/2} is
// r̄σθ⁴|a² − 3|/24 + O(σθ⁶), and r̄σθ⁶/120 + O(σθ⁸) when a² = 3 (the
// fourth moment matched: Julier & Uhlmann 1997's n + κ = 3). The tolerance
// on the UT mean is that leading term with 20% margin.
func TestUnscentedTransformPolar(t *testing.T) {
	polar := func(dst, x []float64) {
		dst[0] = x[0] * math.Cos(x[1])
		dst[1] = x[0] * math.Sin(x[1])
	}
	deg := math.Pi / 180
	for _, c := range []struct {
		tm, st             float64 // bearing mean and standard deviation
		alpha, beta, kappa float64
	}{
		{90 * deg, 15 * deg, 1, 2, 0},
		{90 * deg, 30 * deg, 1, 2, 0},
		{90 * deg, 30 * deg, 1, 0, 1},
		{35 * deg, 20 * deg, 1, 2, 0},
		{35 * deg, 20 * deg, 0.5, 2, 1},
		{-120 * deg, 25 * deg, 1e-3, 2, 0},
	} {
		name := fmt.Sprintf("theta=%.0f/sd=%.0f/alpha=%g/beta=%g/kappa=%g", c.tm/deg, c.st/deg, c.alpha, c.beta, c.kappa)
		t.Run(name, func(t *testing.T) {
			const rm, sr = 1.0, 0.02
			mean := []float64{rm, c.tm}
			cov := []float64{sr * sr, 0, 0, c.st * c.st}
			um, uc, err := filters.UnscentedTransform(mean, cov, 2, polar, c.alpha, c.beta, c.kappa, nil)
			if err != nil {
				t.Fatal(err)
			}
			if cov[0] != sr*sr || cov[3] != c.st*c.st || mean[1] != c.tm {
				t.Fatal("UnscentedTransform modified its inputs")
			}
			em, ec := polarMoments(rm, sr, c.tm, c.st)
			lm, lc := polarLinear(rm, sr, c.tm, c.st)
			eU, eL := dist(um, em), dist(lm, em)
			cU, cL := dist(uc, ec), dist(lc, ec)
			t.Logf("mean error UT %.3g, linearised %.3g; covariance error UT %.3g, linearised %.3g", eU, eL, cU, cL)
			a2 := c.alpha * c.alpha * (2 + c.kappa)
			meanTol := 1.2 * rm * math.Pow(c.st, 4) * math.Abs(a2-3) / 24
			if math.Abs(a2-3) < 1e-12 {
				meanTol = 1.2 * rm * math.Pow(c.st, 6) / 120
			}
			if eU > meanTol {
				t.Errorf("UT mean error %.3g exceeds %.3g", eU, meanTol)
			}
			if !(eU < eL/10) {
				t.Errorf("UT mean error %.3g not well below linearisation's %.3g", eU, eL)
			}
			if !(cU < cL) {
				t.Errorf("UT covariance error %.3g not below linearisation's %.3g", cU, cL)
			}
			// 1 − 2Wᵢ + 2Wᵢ cos(aσ) = 1 − 2 sin²(aσ/2)/a², written so to
			// avoid cancellation; the tolerance is rounding amplified by
			// the weights 1/(2a²).
			h := math.Sin(math.Sqrt(a2) * c.st / 2)
			f := rm * (1 - 2*h*h/a2)
			want := []float64{f * math.Cos(c.tm), f * math.Sin(c.tm)}
			if d := dist(um, want); d > 1e-14*max(1, 1/a2) {
				t.Errorf("UT mean %v, closed form %v", um, want)
			}
		})
	}
}
