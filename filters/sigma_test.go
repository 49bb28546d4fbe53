package filters_test

import (
	"bufio"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/estbench/estbench/filters"
)

// Gauss-Hermite nodes and weights in the physicists' form (weight function
// e^{−x²}) of Abramowitz & Stegun 1964, "Handbook of Mathematical
// Functions", Table 25.10, for n = 2..5 (positive nodes; the rule is
// symmetric). The values are quoted from memory; the orders 2 and 3 have
// the closed forms ±1/√2 with √π/2, and 0, ±√(3/2) with 2√π/3, √π/6
// (derived from H₂ = 4x² − 2 and H₃ = 8x³ − 12x), which the first rows
// match, and the fixture test below cross-checks every order against numpy.
var abramowitzStegun2510 = []struct {
	n    int
	x, w []float64
}{
	{2, []float64{0.707106781186548}, []float64{0.886226925452758}},
	{3, []float64{0, 1.224744871391589}, []float64{1.181635900603677, 0.295408975150919}},
	{4, []float64{0.524647623275290, 1.650680123885785}, []float64{0.804914090005513, 0.081312835447245}},
	{5, []float64{0, 0.958572464613819, 2.020182870456086}, []float64{0.945308720482942, 0.393619323152241, 0.019953242059046}},
}

// The filters use the probabilists' rule for the standard normal density:
// ∫ f(ξ) φ(ξ) dξ = π^{−1/2} ∫ f(√2 x) e^{−x²} dx, so ξ = √2 x and
// w_φ = w/√π. The table's 15 decimals allow 1e-15 of rounding; 3e-15 is
// allowed after the conversion.
func TestHermiteRuleAbramowitzStegun(t *testing.T) {
	for _, c := range abramowitzStegun2510 {
		xi, w := filters.HermiteRule(c.n)
		if len(xi) != c.n || len(w) != c.n {
			t.Fatalf("n=%d: %d nodes, %d weights", c.n, len(xi), len(w))
		}
		for i, xt := range c.x {
			j := c.n/2 + i // the non-negative half, ascending
			gotX := xi[j] / math.Sqrt2
			gotW := w[j] * math.Sqrt(math.Pi)
			if math.Abs(gotX-xt) > 3e-15 || math.Abs(gotW-c.w[i]) > 3e-15 {
				t.Errorf("n=%d node %d: x %.16g w %.16g, A&S 25.10 x %.15f w %.15f", c.n, i, gotX, gotW, xt, c.w[i])
			}
			// The rule is symmetric: the mirror node has the same weight.
			if xi[c.n-1-j] != -xi[j] || w[c.n-1-j] != w[j] {
				t.Errorf("n=%d: node %d not mirrored", c.n, j)
			}
		}
	}
}

// filters/testdata/hermite_fixtures.csv, written by
// testdata/gen_hermite_fixtures.py from numpy.polynomial.hermite.hermgauss
// (Debian python3-numpy 1:1.24.2-1+deb12u1, numpy 1.24.2), converted to the
// standard normal density. Nodes agree to 1e-14 relative to max(1, |ξ|)
// (eigenvalues of a matrix of norm about 2√p found to a few ulps; 1.2e-15
// observed); weights to 1e-13 relative plus 1e-16 absolute (1.5e-14
// relative observed for weights above 1e-10): the smallest weights of a
// high order, 1.6e-21 at p = 30, are squares of eigenvector components
// whose absolute accuracy is that of the largest component, so only the
// absolute bound holds for them (tolerances are our estimate).
func TestHermiteRuleNumpy(t *testing.T) {
	f, err := os.Open(filepath.Join("testdata", "hermite_fixtures.csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	want := map[int][][2]float64{}
	sc := bufio.NewScanner(f)
	for line := 1; sc.Scan(); line++ {
		s := sc.Text()
		if strings.HasPrefix(s, "#") || strings.HasPrefix(s, "order") || s == "" {
			continue
		}
		rec := strings.Split(s, ",")
		if len(rec) != 4 {
			t.Fatalf("hermite_fixtures.csv:%d: %d fields", line, len(rec))
		}
		p, err1 := strconv.Atoi(rec[0])
		x, err2 := strconv.ParseFloat(rec[2], 64)
		w, err3 := strconv.ParseFloat(rec[3], 64)
		if err1 != nil || err2 != nil || err3 != nil {
			t.Fatalf("hermite_fixtures.csv:%d: bad record %q", line, s)
		}
		want[p] = append(want[p], [2]float64{x, w})
	}
	if len(want) != 29 {
		t.Fatalf("fixture has %d orders, want 29 (2..30)", len(want))
	}
	var maxX, maxW, maxWRel float64
	for p := 2; p <= 30; p++ {
		xi, w := filters.HermiteRule(p)
		if len(want[p]) != p {
			t.Fatalf("order %d: fixture has %d nodes", p, len(want[p]))
		}
		for i, nw := range want[p] {
			ex := math.Abs(xi[i]-nw[0]) / max(1, math.Abs(nw[0]))
			ew := math.Abs(w[i]-nw[1]) / nw[1]
			maxX, maxW = max(maxX, ex), max(maxW, math.Abs(w[i]-nw[1]))
			if nw[1] > 1e-10 {
				maxWRel = max(maxWRel, ew)
			}
			if ex > 1e-14 || math.Abs(w[i]-nw[1]) > 1e-13*nw[1]+1e-16 {
				t.Errorf("order %d node %d: %.17g (w %.17g), numpy %.17g (w %.17g)", p, i, xi[i], w[i], nw[0], nw[1])
			}
		}
	}
	t.Logf("largest node error %.3g (relative), weight error %.3g (absolute), %.3g (relative, weights > 1e-10)", maxX, maxW, maxWRel)
}

// The p-point Gauss rule integrates polynomials up to degree 2p−1 exactly
// (Golub & Welsch 1969, "Calculation of Gauss quadrature rules", Math.
// Comp. 23): the even moments of the standard normal, E ξ^{2k} = (2k−1)!!,
// are matched for 2k ≤ 2p−2 and missed at 2k = 2p, where the rule gives
// (2p−1)!! − p! (derived here: ξ^{2p} is He_p² plus a polynomial of degree
// below 2p, which the rule integrates exactly, while it gives 0 for He_p²,
// whose integral is p!).
func TestHermiteRuleExactness(t *testing.T) {
	dfact := func(k int) float64 { // (2k−1)!!
		v := 1.0
		for j := 2*k - 1; j > 1; j -= 2 {
			v *= float64(j)
		}
		return v
	}
	for p := 2; p <= 12; p++ {
		xi, w := filters.HermiteRule(p)
		for k := 0; k <= p; k++ {
			var m float64
			for i := range xi {
				m += w[i] * math.Pow(xi[i], float64(2*k))
			}
			want := dfact(k)
			if k == p {
				fact := 1.0
				for j := 2; j <= p; j++ {
					fact *= float64(j)
				}
				want -= fact
			}
			if math.Abs(m-want) > 1e-12*want {
				t.Errorf("p=%d: Σ w ξ^%d = %.15g, want %.15g", p, 2*k, m, want)
			}
		}
	}
}

// Every set used by the filters matches the first two moments of N(0, I):
// Σ Wm = 1, Σ Wm u = 0, Σ Wc u uᵀ = I. This is the defining property of the
// scaled set (Julier 2002, "The scaled unscented transformation"), of the
// spherical simplex construction (Julier 2003, "The spherical simplex
// unscented transformation", which also puts its n+1 points on a sphere
// about the centre), of the cubature rule (Arasaratnam & Haykin 2009,
// "Cubature Kalman filters") and of the Gauss-Hermite tensor
// rule (Ito & Xiong 2000).
func TestSigmaSetMoments(t *testing.T) {
	type set struct {
		kind    string
		a, b, c float64
		np      func(n int) int
	}
	sets := []set{
		{"scaled", 1, 2, 0, func(n int) int { return 2*n + 1 }},
		{"scaled", 1e-3, 2, 0, func(n int) int { return 2*n + 1 }},
		{"scaled", 0.5, 2, 1, func(n int) int { return 2*n + 1 }},
		{"simplex", 0, 0, 0, func(n int) int { return n + 2 }},
		{"simplex", 0.5, 0, 0, func(n int) int { return n + 2 }},
		{"cubature", 0, 0, 0, func(n int) int { return 2 * n }},
		{"hermite", 2, 0, 0, func(n int) int { return 1 << n }},
		{"hermite", 3, 0, 0, func(n int) int { return int(math.Pow(3, float64(n))) }},
	}
	for _, s := range sets {
		for n := 1; n <= 6; n++ {
			name := fmt.Sprintf("%s/%g,%g,%g/n=%d", s.kind, s.a, s.b, s.c, n)
			u, wm, wc, err := filters.SigmaUnitSet(s.kind, n, s.a, s.b, s.c)
			if err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			np := len(wm)
			if np != s.np(n) || len(u) != np*n {
				t.Fatalf("%s: %d points", name, np)
			}
			// Tolerance: rounding amplified by the largest |weight|
			// (1.25e5·n for α = 1e-3).
			var wmax float64
			for i := range wm {
				wmax = max(wmax, math.Abs(wm[i]), math.Abs(wc[i]))
			}
			tol := 1e-14 * max(1, wmax) * float64(np)
			var sum float64
			for _, v := range wm {
				sum += v
			}
			if math.Abs(sum-1) > tol {
				t.Errorf("%s: Σ Wm = %.17g", name, sum)
			}
			for a := 0; a < n; a++ {
				var m float64
				for i := 0; i < np; i++ {
					m += wm[i] * u[i*n+a]
				}
				if math.Abs(m) > tol {
					t.Errorf("%s: mean[%d] = %.3g", name, a, m)
				}
				for b := 0; b < n; b++ {
					var c float64
					for i := 0; i < np; i++ {
						c += wc[i] * u[i*n+a] * u[i*n+b]
					}
					want := 0.0
					if a == b {
						want = 1
					}
					if math.Abs(c-want) > tol {
						t.Errorf("%s: cov[%d,%d] = %.17g, want %g", name, a, b, c, want)
					}
				}
			}
			if s.kind == "simplex" {
				// Julier 2003: the n+1 non-central points lie on one sphere.
				var r0 float64
				for i := 1; i < np; i++ {
					var r float64
					for a := 0; a < n; a++ {
						r += u[i*n+a] * u[i*n+a]
					}
					if i == 1 {
						r0 = r
					} else if math.Abs(r-r0) > 1e-12*r0 {
						t.Errorf("%s: point %d at radius² %.17g, point 1 at %.17g", name, i, r, r0)
					}
				}
			}
		}
	}
}

// Degrees of the rules beyond the covariance: the cubature rule is exact
// for polynomials of degree three only (Arasaratnam & Haykin 2009: its
// fourth moment E ξ₁⁴ is n, against 3 for the normal), while the
// Gauss-Hermite tensor rule of order 3 matches E ξ₁⁴ = 3 and
// E ξ₁² ξ₂² = 1 (degree 5 per coordinate; Ito & Xiong 2000).
func TestSigmaSetFourthMoments(t *testing.T) {
	const n = 4
	moments := func(kind string, a float64) (m4, m22 float64) {
		u, wm, _, err := filters.SigmaUnitSet(kind, n, a, 0, 0)
		if err != nil {
			t.Fatal(err)
		}
		for i := range wm {
			x1, x2 := u[i*n], u[i*n+1]
			m4 += wm[i] * x1 * x1 * x1 * x1
			m22 += wm[i] * x1 * x1 * x2 * x2
		}
		return m4, m22
	}
	if m4, m22 := moments("cubature", 0); math.Abs(m4-n) > 1e-13 || math.Abs(m22) > 1e-13 {
		t.Errorf("cubature: E ξ₁⁴ = %.15g (want n = %d), E ξ₁²ξ₂² = %.3g (want 0)", m4, n, m22)
	}
	if m4, m22 := moments("hermite", 3); math.Abs(m4-3) > 1e-13 || math.Abs(m22-1) > 1e-13 {
		t.Errorf("hermite p=3: E ξ₁⁴ = %.15g (want 3), E ξ₁²ξ₂² = %.15g (want 1)", m4, m22)
	}
}

// hermiteSet refuses sets above the limit with an error naming the sizes.
func TestGHKFPointLimit(t *testing.T) {
	if _, _, _, err := filters.SigmaUnitSet("hermite", 11, 3, 0, 0); err == nil || !strings.Contains(err.Error(), "3^11") {
		t.Errorf("order 3 in 11 dimensions (177147 points): err %v, want the point limit", err)
	}
	if _, _, _, err := filters.SigmaUnitSet("hermite", 10, 3, 0, 0); err != nil {
		t.Errorf("order 3 in 10 dimensions (59049 points): %v", err)
	}
}
