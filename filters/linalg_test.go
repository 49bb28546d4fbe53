package filters_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/estbench/estbench/filters"
	"github.com/estbench/estbench/filters/filtertest"
)

// randMatrix fills an n x m matrix with standard normal entries.
func randMatrix(rng *rand.Rand, n, m int) []float64 {
	a := make([]float64, n*m)
	for i := range a {
		a[i] = rng.NormFloat64()
	}
	return a
}

// gonumChol returns the lower Cholesky factor of the symmetric a by gonum's
// mat.Cholesky, the reference for the factors below.
func gonumChol(t *testing.T, a []float64, n int) []float64 {
	t.Helper()
	var c mat.Cholesky
	if !c.Factorize(mat.NewSymDense(n, append([]float64(nil), a...))) {
		t.Fatal("gonum: not positive definite")
	}
	var l mat.TriDense
	c.LTo(&l)
	out := make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j <= i; j++ {
			out[i*n+j] = l.At(i, j)
		}
	}
	return out
}

func maxRelDiff(got, want []float64) float64 {
	var scale, d float64
	for i := range want {
		scale = max(scale, math.Abs(want[i]))
		d = max(d, math.Abs(got[i]-want[i]))
	}
	return d / scale
}

// The Householder triangularisation gives [L 0] Q with L L ᵀ = A Aᵀ
// (Golub & Van Loan 2013, "Matrix Computations", ch. 5); a lower
// triangular factor with positive diagonal is unique, so for a full-rank A
// L is the Cholesky factor of A Aᵀ, here from gonum's mat.Cholesky.
func TestLQLowerIsCholeskyOfAAt(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	for _, d := range [][2]int{{1, 1}, {2, 5}, {3, 3}, {5, 16}, {4, 9}} {
		n, m := d[0], d[1]
		t.Run(fmt.Sprintf("%dx%d", n, m), func(t *testing.T) {
			a := randMatrix(rng, n, m)
			aat := make([]float64, n*n)
			for i := 0; i < n; i++ {
				for j := 0; j < n; j++ {
					for k := 0; k < m; k++ {
						aat[i*n+j] += a[i*m+k] * a[j*m+k]
					}
				}
			}
			l := make([]float64, n*n)
			filters.LQLower(l, a, n, m)
			for i := 0; i < n; i++ {
				if l[i*n+i] < 0 {
					t.Errorf("L[%d,%d] = %g < 0", i, i, l[i*n+i])
				}
				for j := i + 1; j < n; j++ {
					if l[i*n+j] != 0 {
						t.Errorf("L[%d,%d] = %g above the diagonal", i, j, l[i*n+j])
					}
				}
			}
			if e := maxRelDiff(l, gonumChol(t, aat, n)); e > 1e-13 {
				t.Errorf("L differs from chol(A Aᵀ) by %.3g relative", e)
			}
		})
	}
	// A rank-deficient A, rows (r₁, r₂, r₁): L Lᵀ = A Aᵀ still (worked
	// by hand: [[30,6,30],[6,2,6],[30,6,30]]), with a zero last pivot.
	l3 := make([]float64, 9)
	filters.LQLower(l3, []float64{1, 2, 3, 4, 0, 1, 0, 1, 1, 2, 3, 4}, 3, 4)
	got := make([]float64, 9)
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			for k := 0; k < 3; k++ {
				got[i*3+j] += l3[i*3+k] * l3[j*3+k]
			}
		}
	}
	want := []float64{30, 6, 30, 6, 2, 6, 30, 6, 30}
	if e := maxRelDiff(got, want); e > 1e-14 || math.Abs(l3[8]) > 1e-14 {
		t.Errorf("rank-deficient: L Lᵀ off by %.3g, last pivot %.3g", e, l3[8])
	}
}

// Rank-one update and downdate against gonum's Cholesky.SymRankOne (the
// reference implementation of the same operation) and against a fresh
// factorization of A ± x xᵀ.
func TestCholUpdateDowndate(t *testing.T) {
	rng := rand.New(rand.NewPCG(2, 2))
	for _, n := range []int{1, 2, 5, 8} {
		b := randMatrix(rng, n, n+3)
		a := make([]float64, n*n)
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				for k := 0; k < n+3; k++ {
					a[i*n+j] += b[i*(n+3)+k] * b[j*(n+3)+k]
				}
			}
		}
		x := randMatrix(rng, 1, n)
		for _, sign := range []float64{1, -1} {
			// For the downdate, shrink x so A − x xᵀ stays positive
			// definite: x = ½ L e for a random unit-ish e.
			l := make([]float64, n*n)
			if !filters.Cholesky(l, a, n) {
				t.Fatal("cholesky failed")
			}
			v := append([]float64(nil), x...)
			if sign < 0 {
				for i := 0; i < n; i++ {
					var s float64
					for j := 0; j <= i; j++ {
						s += l[i*n+j] * x[j]
					}
					v[i] = 0.5 * s / math.Sqrt(float64(n))
				}
			}
			var ref mat.Cholesky
			ref.Factorize(mat.NewSymDense(n, append([]float64(nil), a...)))
			if !ref.SymRankOne(&ref, sign, mat.NewVecDense(n, append([]float64(nil), v...))) {
				t.Fatal("gonum SymRankOne failed")
			}
			var rl mat.TriDense
			ref.LTo(&rl)
			want := make([]float64, n*n)
			for i := 0; i < n; i++ {
				for j := 0; j <= i; j++ {
					want[i*n+j] = rl.At(i, j)
				}
			}
			w := append([]float64(nil), v...)
			if sign > 0 {
				filters.CholUpdate(l, w, n)
			} else if !filters.CholDowndate(l, w, n) {
				t.Fatalf("n=%d: downdate failed", n)
			}
			if e := maxRelDiff(l, want); e > 1e-12 {
				t.Errorf("n=%d sign %+g: differs from gonum SymRankOne by %.3g", n, sign, e)
			}
		}
	}
	// Downdating I by x with |x| > 1 leaves an indefinite matrix: refused.
	l := []float64{1, 0, 0, 1}
	if filters.CholDowndate(l, []float64{0.6, 0.9}, 2) {
		t.Error("downdate of I by a vector of norm > 1 succeeded")
	}
}

// semiChol factors CV2D's process noise, which has rank one per axis
// (Bar-Shalom et al. 2001, §6.3.2: Q = q Γ Γᵀ with Γ = [T²/2, T]), with a
// zero column per axis, and refuses an indefinite matrix.
func TestSemiChol(t *testing.T) {
	q := filtertest.CV2D(0.5, 4).Q
	l := make([]float64, 16)
	if !filters.SemiChol(l, q, 4) {
		t.Fatal("semiChol refused CV2D's Q")
	}
	for i := 0; i < 4; i++ {
		for j := 0; j < 4; j++ {
			var s float64
			for k := 0; k < 4; k++ {
				s += l[i*4+k] * l[j*4+k]
			}
			if math.Abs(s-q[i*4+j]) > 1e-15 {
				t.Errorf("L Lᵀ[%d,%d] = %.17g, Q %.17g", i, j, s, q[i*4+j])
			}
		}
	}
	if l[1*4+1] != 0 || l[3*4+3] != 0 {
		t.Errorf("pivots of the velocities %g, %g, want 0 (rank one per axis)", l[5], l[15])
	}
	if filters.SemiChol(l, []float64{1, 2, 2, 1}, 2) {
		t.Error("semiChol accepted the indefinite [[1,2],[2,1]]")
	}
}
