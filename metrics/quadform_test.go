package metrics

import (
	"math"
	"testing"
)

// A 2x2 case worked by hand: C = [[4, 2], [2, 3]], det = 8,
// C⁻¹ = [[3, -2], [-2, 4]]/8, e = [1, 2]: eᵀC⁻¹e = (3 - 8 + 16)/8 = 11/8.
func TestNormalisedHandWorked(t *testing.T) {
	work := make([]float64, 6)
	got, ok := Normalised([]float64{1, 2}, []float64{4, 2, 2, 3}, work)
	if !ok || math.Abs(got-11.0/8) > 1e-14 {
		t.Fatalf("got %v ok=%v, want 11/8", got, ok)
	}
	if _, ok := Normalised([]float64{1, 2}, []float64{1, 2, 2, 1}, work); ok {
		t.Fatal("indefinite covariance reported positive definite")
	}
	if a := testing.AllocsPerRun(100, func() { Normalised([]float64{1, 2}, []float64{4, 2, 2, 3}, work) }); a != 0 {
		t.Fatalf("%v allocs", a)
	}
}
