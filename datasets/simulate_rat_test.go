package datasets

import (
	"math"
	"testing"
)

// SimulateAdditive draws the measurement noise of step k with the
// covariance Model.RAt gives for it. On cv2d with RAt = diag(v_k, v_k),
// v_k = 100·(0.1 + (k mod 5)) except every fourth step (R = 100 I), the
// residuals z_k − H(x_k) scaled by 1/√v_k are standard normal: their
// variance over 40 runs of 100 steps (8000 values) is 1 within 5 standard
// errors √(2/8000) (normal approximation for a sample variance; 5 is our
// choice), while unscaled their mean square is that of the v_k. An RAt
// that never reports one leaves the sequence bit-identical to a model
// without it, and Run still allocates nothing once its buffers are sized.
func TestSimulateAdditiveRAt(t *testing.T) {
	varAt := func(k int) float64 {
		if k%4 == 0 {
			return 100
		}
		return 100 * (0.1 + float64(k%5))
	}
	p := mustBuild(t, func() (*Problem, error) { return NewCV2D(CV2DConfig{}) })
	if !sameBits(p.Model.R, []float64{100, 0, 0, 100}) {
		t.Fatalf("cv2d R = %v, want 100 I", p.Model.R)
	}
	p.Model.RAt = func(dst []float64, k int) bool {
		if k%4 == 0 {
			return false
		}
		v := varAt(k)
		dst[0], dst[1], dst[2], dst[3] = v, 0, 0, v
		return true
	}
	m := &p.Model
	var seq Sequence
	h := make([]float64, m.Nz)
	const runs = 40
	var s2, raw, want float64
	n := 0
	for r := 0; r < runs; r++ {
		p.Run(&seq, newRNG(5, uint64(r)))
		for k := 1; k <= seq.Steps; k++ {
			m.H(h, seq.State(k), k)
			z := seq.Meas(k)
			for i := range h {
				d := z[i] - h[i]
				s2 += d * d / varAt(k)
				raw += d * d
				want += varAt(k)
				n++
			}
		}
	}
	if n < 8000 {
		t.Fatalf("%d residuals", n)
	}
	if got, se := s2/float64(n), math.Sqrt(2/float64(n)); math.Abs(got-1) > 5*se {
		t.Errorf("scaled residual variance %v, want 1 ± %.3g", got, 5*se)
	}
	if got, w := raw/float64(n), want/float64(n); math.Abs(got/w-1) > 0.1 || math.Abs(got/100-1) < 0.5 {
		t.Errorf("raw mean square %v, want about %v (not R's 100)", got, w)
	}
	rng := newRNG(5, 0)
	if a := testing.AllocsPerRun(5, func() { p.Run(&seq, rng) }); a != 0 {
		t.Errorf("Run with RAt allocates %v times", a)
	}

	a := mustBuild(t, func() (*Problem, error) { return NewCV2D(CV2DConfig{}) })
	b := mustBuild(t, func() (*Problem, error) { return NewCV2D(CV2DConfig{}) })
	b.Model.RAt = func([]float64, int) bool { return false }
	var sa, sb Sequence
	a.Run(&sa, newRNG(6, 1))
	b.Run(&sb, newRNG(6, 1))
	if !sameBits(sa.Z, sb.Z) || !sameBits(sa.Truth, sb.Truth) {
		t.Error("an RAt that reports nothing changes the simulation")
	}
}
