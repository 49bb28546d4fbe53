package metrics

import (
	"math"
	"testing"
)

// Steps whose SqErr is NaN are left out of RMSE, ANEES and the curves;
// the figures are those of the scored steps, worked by hand:
// run 0 scores steps 2 and 3 with SqErr 4, 16 and NEES 1, 3; run 1 scores
// the same steps with SqErr 0, 4 and NEES 2, 2. RMSE = sqrt((4+16+0+4)/4)
// = sqrt(6); ANEES = (1+3+2+2)/4 = 2.
func TestAccumulatorUnscoredSteps(t *testing.T) {
	nan := math.NaN()
	a := NewAccumulator(3, 2, 1)
	a.Add(&RunTrace{Run: 0, SqErr: []float64{nan, 4, 16}, NEES: []float64{99, 1, 3}, NsPerStep: 1})
	a.Add(&RunTrace{Run: 1, SqErr: []float64{nan, 0, 4}, NEES: []float64{99, 2, 2}, NsPerStep: 1})
	s := a.Summary(1)
	if math.Abs(s.RMSE-math.Sqrt(6)) > 1e-15 || s.ANEES != 2 {
		t.Errorf("RMSE %v ANEES %v, want sqrt(6) and 2", s.RMSE, s.ANEES)
	}
	// Bounds of 4 scored values of 2 dof, as ChiSquareBounds(8, 4) (Bar-Shalom, Li &
	// Kirubarajan 2001, §5.4.2, with the scored pairs as the sample).
	lo, hi := ChiSquareBounds(8, 4, level)
	if s.ANEESLo != lo || s.ANEESHi != hi {
		t.Errorf("ANEES bounds [%v, %v], want [%v, %v]", s.ANEESLo, s.ANEESHi, lo, hi)
	}
	c := a.Curves()
	if !math.IsNaN(c[0].RMSE) || !math.IsNaN(c[0].ANEES) || c[1].RMSE != math.Sqrt(2) || c[2].ANEES != 2.5 {
		t.Errorf("curves: %+v", c)
	}
	if st := RunStatOf(&RunTrace{SqErr: []float64{nan, 4, 16}, NEES: []float64{99, 1, 3}}); st.RMSE != math.Sqrt(10) || st.ANEES != 2 {
		t.Errorf("RunStatOf: RMSE %v ANEES %v, want sqrt(10) and 2", st.RMSE, st.ANEES)
	}

	// Replayed data: the bounds are those of one run's scored steps (2 values).
	b := NewAccumulator(3, 2, 1)
	b.Replayed = true
	b.Add(&RunTrace{Run: 0, SqErr: []float64{nan, 4, 16}, NEES: []float64{99, 1, 3}, NsPerStep: 1})
	b.Add(&RunTrace{Run: 1, SqErr: []float64{nan, 0, 4}, NEES: []float64{99, 2, 2}, NsPerStep: 1})
	sb := b.Summary(1)
	lo, hi = ChiSquareBounds(4, 2, level)
	if sb.ANEESLo != lo || sb.ANEESHi != hi || sb.ANEES != 2 {
		t.Errorf("replayed: ANEES %v in [%v, %v], want 2 in [%v, %v]", sb.ANEES, sb.ANEESLo, sb.ANEESHi, lo, hi)
	}
}
