package datasets

import (
	"encoding/csv"
	"errors"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"
)

// replaySample is the default AIS sample, from this package's folder.
var replaySample = filepath.Join("..", "..", "shared", "datasets", filepath.FromSlash(ReplayDefaultFile))

// needReplaySample skips the test when the shared dataset samples are
// absent, and fails it under CI=true.
func needReplaySample(t *testing.T) {
	t.Helper()
	if _, err := os.Stat(replaySample); err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatalf("dataset sample %s is missing under CI: %v", replaySample, err)
		}
		t.Skipf("dataset sample %s not found (shared datasets absent): %v", replaySample, err)
	}
}

// The default problem replays the longest path of the AIS sample with at
// least 15 fixes: vessel 367782880 (H203), 22 fixes over 1318 s (counted
// in the sample with a spreadsheet-style sort by MMSI and time; its
// SOURCE.md says reports come about once a minute), so 131 steps of 10 s.
// Its smoothed speed stays below 30 m/s, a plausible ceiling for harbour
// craft (common practice, no source; fast ferries cruise at about 25 kn,
// 13 m/s), and at the fixes where the vessel is under way (reported SOG
// above 5 m/s) it agrees with the speed over ground the vessel itself
// reported (its GNSS receiver's Doppler speed, independent of the
// positions): within 0.5 m/s on average and 2.5 m/s at worst (measured
// 0.42 and 2.34 over 15 fixes; the worst is where the vessel speeds up
// after a 7-minute stop). The truth passes within 25 m of every fix, 2.5 times the 10 m
// fix noise the smoother assumes (measured at most 18.8 m).
func TestRadarReplayDefaultTrack(t *testing.T) {
	needReplaySample(t)
	p, err := NewRadarReplay(RadarReplayConfig{File: replaySample})
	if err != nil {
		t.Fatal(err)
	}
	if p.Steps != 131 || p.Dt != 10 || p.Model.Nx != 4 {
		t.Fatalf("steps %d, dt %v, nx %d; want 131, 10, 4", p.Steps, p.Dt, p.Model.Nx)
	}
	tr, err := replayTrack(RadarReplayConfig{File: replaySample, MinPoints: 15})
	if err != nil {
		t.Fatal(err)
	}
	if tr.ID != "367782880" || len(tr.Points) != 22 || tr.Points[21].T.Sub(tr.Points[0].T) != 1318*time.Second {
		t.Fatalf("track %s with %d fixes", tr.ID, len(tr.Points))
	}
	var seq Sequence
	p.Run(&seq, newRNG(1, 1))
	for k := 1; k <= p.Steps; k++ {
		x := seq.State(k)
		if v := math.Hypot(x[1], x[3]); !(v < 30) {
			t.Fatalf("step %d: speed %v m/s", k, v)
		}
	}
	lp, err := replayLocal(&tr, "-3000,2000")
	if err != nil {
		t.Fatal(err)
	}
	ts, xs, err := replaySmooth(lp)
	if err != nil {
		t.Fatal(err)
	}
	var sum, worst, worstPos float64
	n := 0
	for i, pt := range tr.Points {
		worstPos = math.Max(worstPos, math.Hypot(xs[4*i]-lp[i].E, xs[4*i+2]-lp[i].N))
		if pt.SOG > 5 {
			d := math.Abs(math.Hypot(xs[4*i+1], xs[4*i+3]) - pt.SOG)
			sum += d
			worst = math.Max(worst, d)
			n++
		}
	}
	if len(ts) != 22 || n < 10 {
		t.Fatalf("%d fix times, %d under way", len(ts), n)
	}
	if mean := sum / float64(n); !(mean < 0.5) || !(worst < 2.5) {
		t.Errorf("smoothed speed against reported SOG: mean difference %.3g m/s, worst %.3g", mean, worst)
	}
	if !(worstPos < 25) {
		t.Errorf("truth passes %.3g m from a fix", worstPos)
	}
}

// The site frame against the ellipsoid: the range and bearing of each raw
// fix, as NewRadarReplay computes them, equal the geodesic distance and
// initial azimuth from the site computed by GeographicLib (Karney 2013,
// "Algorithms for geodesics", J. Geodesy 87(1); Debian
// python3-geographiclib 2.0-2, testdata/gen_replay_geodesic.py), the
// bearing being 90° minus the azimuth. On a sphere of radius R the
// horizontal ENU distance of a point at arc length d is R sin(d/R), short
// by d³/(6R²): 3.0 mm at the farthest fix, 8.94 km away, which is what
// is measured (2.9 mm); the bearings agree to 4e-10 rad. Tolerances 1 cm
// and 1e-8 rad.
func TestRadarReplayGeometryMatchesGeodesics(t *testing.T) {
	needReplaySample(t)
	tr, err := replayTrack(RadarReplayConfig{File: replaySample, Track: "367782880", MinPoints: 2})
	if err != nil {
		t.Fatal(err)
	}
	lp, err := replayLocal(&tr, "geo:40.6016,-74.0597")
	if err != nil {
		t.Fatal(err)
	}
	f, err := os.Open("testdata/replay_geodesic.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(rows)-1 != len(lp) {
		t.Fatalf("%d reference rows for %d fixes", len(rows)-1, len(lp))
	}
	var z [2]float64
	for _, row := range rows[1:] {
		i, _ := strconv.Atoi(row[0])
		dist, _ := strconv.ParseFloat(row[1], 64)
		azi, _ := strconv.ParseFloat(row[2], 64)
		rangeBearing(z[:], []float64{lp[i].E, 0, lp[i].N, 0})
		want := wrapPi((90 - azi) * math.Pi / 180)
		if !near(z[0], dist, 0.01, 0) || math.Abs(wrapPi(z[1]-want)) > 1e-8 {
			t.Errorf("fix %d: range %.4f bearing %.8f; geodesic %.4f, %.8f", i, z[0], z[1], dist, want)
		}
	}
}

// Noise-free, the measurements are the exact range and bearing of the
// true position from the radar (the geometry checked above): with σ_r =
// 1e-9 m and σ_θ = 1e-12 rad they equal √(px² + py²) and atan2(py, px)
// to 1e-6 m and 1e-9 rad, and the true initial state is the first row of
// the truth, the same in every run.
func TestRadarReplayNoiseFreeMeasurements(t *testing.T) {
	needReplaySample(t)
	for _, motion := range []string{"cv", "ct"} {
		p, err := NewRadarReplay(RadarReplayConfig{File: replaySample, SigmaR: 1e-9, SigmaTheta: 1e-12, Motion: motion})
		if err != nil {
			t.Fatal(err)
		}
		var a, b Sequence
		p.Run(&a, newRNG(3, 4))
		p.Run(&b, newRNG(5, 6))
		if !sameBits(a.Truth, b.Truth) || !sameBits(a.X0, b.X0) {
			t.Fatalf("%s: the truth changed with the stream", motion)
		}
		for k := 1; k <= p.Steps; k++ {
			x, z := a.State(k), a.Meas(k)
			r, th := math.Hypot(x[0], x[2]), math.Atan2(x[2], x[0])
			if !near(z[0], r, 1e-6, 0) || math.Abs(wrapPi(z[1]-th)) > 1e-9 {
				t.Fatalf("%s step %d: z %v, geometry %v %v", motion, k, z, r, th)
			}
		}
	}
}

// The run's stream alone decides the noise and the filters' prior mean: a
// fresh problem on the same stream gives the same bits, another stream
// other ones. The normalised measurement errors over 20 runs (2620 per
// component) have mean within 4 standard errors of 0 (|mean| < 4/√2620 =
// 0.078) and variance within 4 standard errors of 1 (√(2/2620) = 0.028,
// normal theory), and so do the prior errors X0 - x0 over P0's standard
// deviations (80 draws: 0.45 and 0.63).
func TestRadarReplayStreamAndNoise(t *testing.T) {
	needReplaySample(t)
	cfg := RadarReplayConfig{File: replaySample}
	p := mustBuild(t, func() (*Problem, error) { return NewRadarReplay(cfg) })
	q := mustBuild(t, func() (*Problem, error) { return NewRadarReplay(cfg) })
	var a, b, c Sequence
	p.Run(&a, newRNG(1, 2))
	pa := append([]float64(nil), p.X0...)
	q.Run(&b, newRNG(1, 2))
	if !sameBits(a.Z, b.Z) || !sameBits(pa, q.X0) {
		t.Fatal("same stream gave different noise")
	}
	p.Run(&c, newRNG(1, 3))
	if sameBits(a.Z, c.Z) || sameBits(pa, p.X0) {
		t.Fatal("different streams gave the same noise")
	}
	var zs [2][]float64
	var pe []float64
	var h [2]float64
	sd := []float64{15, 2e-3}
	for r := range 20 {
		p.Run(&a, newRNG(9, uint64(r)))
		for k := 1; k <= a.Steps; k++ {
			rangeBearing(h[:], a.State(k))
			z := a.Meas(k)
			zs[0] = append(zs[0], (z[0]-h[0])/sd[0])
			zs[1] = append(zs[1], wrapPi(z[1]-h[1])/sd[1])
		}
		for i := range 4 {
			pe = append(pe, (p.X0[i]-a.X0[i])/math.Sqrt(p.P0[i*4+i]))
		}
	}
	for i, v := range [][]float64{zs[0], zs[1], pe} {
		var m, m2 float64
		for _, e := range v {
			m += e
		}
		m /= float64(len(v))
		for _, e := range v {
			m2 += (e - m) * (e - m)
		}
		m2 /= float64(len(v) - 1)
		n := float64(len(v))
		if math.Abs(m) > 4/math.Sqrt(n) || math.Abs(m2-1) > 4*math.Sqrt(2/n) {
			t.Errorf("set %d: normalised mean %.4g, variance %.4g over %d", i, m, m2, len(v))
		}
	}
}

// Run and the model functions allocate nothing once sized (doc.go's
// memory contract), the batch functions equal the single ones, and the analytic Jacobians of both models match central
// differences (to 1e-6 relative) along the default truth.
func TestRadarReplayModels(t *testing.T) {
	needReplaySample(t)
	for _, motion := range []string{"cv", "ct"} {
		p, err := NewRadarReplay(RadarReplayConfig{File: replaySample, Motion: motion})
		if err != nil {
			t.Fatal(err)
		}
		var seq Sequence
		rng := newRNG(7, 7)
		p.Run(&seq, rng)
		if n := testing.AllocsPerRun(20, func() { p.Run(&seq, rng) }); n != 0 {
			t.Errorf("%s: Run allocates %v times per call", motion, n)
		}
		m := &p.Model
		nx := m.Nx
		fj, hj := make([]float64, nx*nx), make([]float64, 2*nx)
		for k := 1; k <= p.Steps; k += 13 {
			x := seq.State(k)
			m.FJac(fj, x, k)
			m.HJac(hj, x, k)
			for i, v := range centralJac(m.F, x, nx, k) {
				if !near(fj[i], v, 1e-6, 1e-6) {
					t.Fatalf("%s step %d: FJac[%d] = %v, differences %v", motion, k, i, fj[i], v)
				}
			}
			for i, v := range centralJac(m.H, x, 2, k) {
				if !near(hj[i], v, 1e-9, 1e-6) {
					t.Fatalf("%s step %d: HJac[%d] = %v, differences %v", motion, k, i, hj[i], v)
				}
			}
		}
		fx, hx := make([]float64, nx), make([]float64, 2)
		if n := testing.AllocsPerRun(20, func() {
			x := seq.State(1)
			m.HJac(hj, x, 1)
			m.FJac(fj, x, 1)
			m.F(fx, x, 1)
			m.H(hx, x, 1)
		}); n != 0 {
			t.Errorf("%s: model functions allocate %v times per call", motion, n)
		}
		// FMany and HMany apply F and H to each state (filters.Model).
		const nb = 3
		xs := seq.Truth[:nb*nx]
		fb, hb := make([]float64, nb*nx), make([]float64, nb*2)
		m.FMany(fb, xs, 1)
		m.HMany(hb, xs, 1)
		for i := range nb {
			m.F(fx, xs[i*nx:(i+1)*nx], 1)
			m.H(hx, xs[i*nx:(i+1)*nx], 1)
			if !sameBits(fx, fb[i*nx:(i+1)*nx]) || !sameBits(hx, hb[2*i:2*i+2]) {
				t.Fatalf("%s: batch state %d differs from the single call", motion, i)
			}
		}
	}
}

// Closed forms of the truth's two steps: the RTS smoother returns
// positions on a straight line at constant speed unchanged (the line is
// a noise-free path of its model and the prior sits on it), with that
// speed; and cubic Hermite interpolation reproduces a cubic exactly with
// its derivatives (it is exact for polynomials up to degree 3; de Boor
// 1978, "A Practical Guide to Splines", ch. IV).
func TestReplaySmootherAndInterpolation(t *testing.T) {
	ts := []float64{0, 7, 60, 61, 130, 200}
	y := make([]float64, len(ts))
	for i, t := range ts {
		y[i] = 12 - 3.5*t
	}
	got := rtsCWNA(ts, y, 0.05, 100)
	for i := range ts {
		if !near(got[2*i], y[i], 1e-9, 1e-12) || !near(got[2*i+1], -3.5, 1e-12, 1e-12) {
			t.Fatalf("time %v: smoothed %v %v, want %v -3.5", ts[i], got[2*i], got[2*i+1], y[i])
		}
	}
	cubic := func(t float64) (p, v, a float64) {
		return 2 + 0.5*t - 0.03*t*t + 1e-4*t*t*t, 0.5 - 0.06*t + 3e-4*t*t, -0.06 + 6e-4*t
	}
	xs := make([]float64, 4*len(ts))
	for i, t := range ts {
		xs[4*i+2], xs[4*i+3], _ = cubic(t)
	}
	for _, t0 := range []float64{0, 3.3, 7, 59.9, 60.5, 100, 200} {
		p, v, a := hermite(ts, xs, 2, t0)
		wp, wv, wa := cubic(t0)
		if !near(p, wp, 1e-9, 1e-12) || !near(v, wv, 1e-12, 1e-10) || !near(a, wa, 1e-12, 1e-9) {
			t.Errorf("t=%v: %v %v %v, want %v %v %v", t0, p, v, a, wp, wv, wa)
		}
	}
}

// A GPX track by car replays too (format from the extension), and bad
// input is an error saying what is wrong or where the file was looked for.
func TestRadarReplayOtherSourcesAndErrors(t *testing.T) {
	needReplaySample(t)
	gpx := filepath.Join("..", "..", "shared", "datasets", "gpx-gpxpy-tracks", "around-visnjan-with-car.gpx")
	if p, err := NewRadarReplay(RadarReplayConfig{File: gpx, Dt: 5}); err != nil {
		t.Errorf("gpx: %v", err)
	} else if p.Steps != 102 { // 06:15:50 to 06:24:24 is 514 s (the file's SOURCE.md)
		t.Errorf("gpx: %d steps of 5 s, want 102", p.Steps)
	}
	_, err := NewRadarReplay(RadarReplayConfig{File: "no/such/file.csv"})
	if !errors.Is(err, fs.ErrNotExist) || !strings.Contains(err.Error(), "no/such/file.csv") {
		t.Errorf("missing file: %v", err)
	}
	for _, tc := range []struct {
		cfg  RadarReplayConfig
		want string
	}{
		{RadarReplayConfig{File: replaySample, Site: "north"}, `Site must be "E,N"`},
		{RadarReplayConfig{File: replaySample, Site: "geo:95,0"}, "latitude must be"},
		{RadarReplayConfig{File: replaySample, Track: "123"}, `no track with ID "123"`},
		{RadarReplayConfig{File: replaySample, Track: "#999"}, "tracks #1 to #222"},
		{RadarReplayConfig{File: replaySample, MinPoints: 1000}, "no track of the file has at least 1000 fixes"},
		{RadarReplayConfig{File: replaySample, Motion: "ca"}, "Motion must be cv or ct"},
		{RadarReplayConfig{File: replaySample, Format: "kml"}, "Format must be"},
		{RadarReplayConfig{File: "track.kml"}, "cannot tell the format"},
	} {
		if _, err := NewRadarReplay(tc.cfg); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%+v: error %v, want %q", tc.cfg, err, tc.want)
		}
	}
}

// With no file the default sample is found by walking up from the
// current directory to the folder holding shared/datasets; from a folder
// with no such parent the error names the folder and what to fetch.
func TestRadarReplayDefaultFileLookup(t *testing.T) {
	needReplaySample(t)
	path, err := recordingFile("radar-replay", "")
	if err != nil {
		t.Fatal(err)
	}
	want, _ := filepath.Abs(replaySample)
	if path != want {
		t.Errorf("default file %s, want %s", path, want)
	}
	t.Chdir(t.TempDir())
	_, err = recordingFile("radar-replay", "")
	if !errors.Is(err, fs.ErrNotExist) || !strings.Contains(err.Error(), ReplayDefaultFile) {
		t.Errorf("no shared folder: %v", err)
	}
}

// BenchmarkRadarReplayRun measures one run of the default problem (131
// steps): copying the truth and drawing the noise.
func BenchmarkRadarReplayRun(b *testing.B) {
	if _, err := os.Stat(replaySample); err != nil {
		b.Skipf("dataset sample %s not found: %v", replaySample, err)
	}
	p, err := NewRadarReplay(RadarReplayConfig{File: replaySample})
	if err != nil {
		b.Fatal(err)
	}
	var seq Sequence
	rng := newRNG(1, 1)
	b.ReportAllocs()
	for b.Loop() {
		p.Run(&seq, rng)
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*p.Steps), "ns/step")
}
