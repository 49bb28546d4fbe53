package navlog

import (
	"math"
	"testing"
	"time"
)

// ToENU against PROJ 9.1.1 (+proj=cart, +proj=topocentric; rows of
// ../geo/testdata/proj_enu.txt about the origin 52.84N 5.71E, 45.8 m):
// 0.001° north is n 111.2840635818, u -0.0009711350; 0.001° east is
// e 67.3856364392.
func TestToENU(t *testing.T) {
	nan := math.NaN()
	t0 := utc("2020-04-07T21:39:50")
	tr := Track{Points: []Point{
		{T: t0, Lat: 52.84, Lon: 5.71, Alt: 45.8, SOG: nan, COG: nan},
		{T: t0.Add(1500 * time.Millisecond), Lat: 52.841, Lon: 5.71, Alt: 45.8, SOG: 2, COG: 90},
		{T: t0.Add(3 * time.Second), Lat: 52.84, Lon: 5.711, Alt: nan, SOG: 3, COG: 180},
	}}
	pts, f := tr.ToENU(nil)
	if o := f.Origin(); o.Lat != 52.84 || o.H != 45.8 || len(pts) != 3 {
		t.Fatalf("origin %+v, %d points", o, len(pts))
	}
	if p := pts[0]; p.T != 0 || p.E != 0 || p.N != 0 || p.U != 0 || !math.IsNaN(p.VE) {
		t.Errorf("first %+v", p)
	}
	if p := pts[1]; p.T != 1.5 || math.Abs(p.E) > 1e-3 || math.Abs(p.N-111.2840635818) > 1e-3 || math.Abs(p.U+0.0009711350) > 1e-3 ||
		math.Abs(p.VE-2) > 1e-15 || math.Abs(p.VN) > 1e-15 {
		t.Errorf("second %+v", p)
	}
	// Row "52.84 5.71 45.8 52.8400000 5.7110000 45.800 ..." of the fixture
	// is at height 45.8; this point has no altitude, so it sits at height
	// 0 and U is NaN; E shrinks by the ratio 45.8 m / (N + 45.8 m), about
	// 7e-6 (N ≈ 6391 km), 0.5 mm, inside the 1 mm tolerance.
	if p := pts[2]; math.Abs(p.E-67.3856364392) > 1e-3 || !math.IsNaN(p.U) || math.Abs(p.VN+3) > 1e-15 || math.Abs(p.VE) > 1e-15 {
		t.Errorf("third %+v", p)
	}
	// dst is reused.
	again, _ := tr.ToENU(pts)
	if &again[0] != &pts[0] {
		t.Error("dst storage not reused")
	}
}

func TestSplitAtGaps(t *testing.T) {
	t0 := utc("2022-01-03T00:00:00")
	mk := func(mins ...int) Track {
		tr := Track{ID: "1", Part: 1}
		for _, m := range mins {
			tr.Points = append(tr.Points, Point{T: t0.Add(time.Duration(m) * time.Minute)})
		}
		return tr
	}
	got := SplitAtGaps(nil, mk(0, 1, 11, 21, 32, 33), 10*time.Minute)
	if len(got) != 2 || len(got[0].Points) != 4 || len(got[1].Points) != 2 || got[1].Part != 2 || got[1].ID != "1" {
		t.Errorf("split %+v", got)
	}
	// Appending to a piece must not overwrite the next one.
	got[0].Points = append(got[0].Points, Point{})
	if !got[1].Points[0].T.Equal(t0.Add(32 * time.Minute)) {
		t.Error("pieces share capacity")
	}
	if got := SplitAtGaps(nil, Track{}, time.Minute); len(got) != 0 {
		t.Errorf("empty track split into %d", len(got))
	}
}
