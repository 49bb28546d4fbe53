package datasets

import (
	"errors"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/estbench/estbench/datasets/fetch"
	"github.com/estbench/estbench/datasets/navlog"
)

// The default track problem takes the same AIS track as radar-replay
// (vessel 367782880, 22 fixes over 1318 s, about one a minute: see
// TestRadarReplayDefaultTrack), so with steps of 10 s most steps have no
// fix. Which steps have one is recomputed here from the raw fix times by
// direct comparison with the windows (t_k − 5 s, t_k + 5 s]; the
// measurement of such a step is the local position of its nearest fix in
// the frame of replayLocal (checked against GeographicLib geodesics in
// TestRadarReplayGeometryMatchesGeodesics). Without truth the sequence's
// truth is NaN, and the prior is two-point differencing of the first two
// fixes (Bar-Shalom, Li & Kirubarajan 2001, §5.5.3).
func TestTrackDefaultHasMissingSteps(t *testing.T) {
	needReplaySample(t)
	p, err := NewTrack(TrackConfig{File: replaySample})
	if err != nil {
		t.Fatal(err)
	}
	tr, err := readTrack("track", replaySample, "", "", 15)
	if err != nil {
		t.Fatal(err)
	}
	if tr.ID != "367782880" || len(tr.Points) != 22 {
		t.Fatalf("track %s with %d fixes, want 367782880 with 22", tr.ID, len(tr.Points))
	}
	lp, err := replayLocal(&tr, "0,0")
	if err != nil {
		t.Fatal(err)
	}
	t0 := lp[1].T
	if want := int(math.Round((lp[21].T - t0) / 10)); p.Steps != want || !p.NoTruth || !p.Model.Linear {
		t.Fatalf("steps %d (want %d), NoTruth %v, linear %v", p.Steps, want, p.NoTruth, p.Model.Linear)
	}
	var seq Sequence
	with, missing := checkTrackSteps(t, p, &seq, lp, 10)
	// 20 fixes after the second, at most one per step; at about one a
	// minute, five of every six steps of 10 s are empty.
	if with < 15 || with > 20 || missing < 4*with {
		t.Errorf("%d steps with a fix and %d without, want 15-20 and at least 4 times as many without", with, missing)
	}
	T := lp[1].T - lp[0].T
	if p.X0[0] != lp[1].E || p.X0[1] != (lp[1].E-lp[0].E)/T || p.P0[1] != 100/T || p.P0[5] != 200/(T*T) {
		t.Errorf("prior %v %v, want two-point differencing of the first two fixes", p.X0, p.P0)
	}
	if a := testing.AllocsPerRun(10, func() { p.Run(&seq, nil) }); a != 0 {
		t.Errorf("Run allocates %v times", a)
	}
}

// checkTrackSteps runs p and checks its sequence against the fixes lp
// (local, as replayLocal gives them) by direct comparison of each fix
// time with the step windows (t_k − dt/2, t_k + dt/2], t_k = t_1 + k·dt:
// a step has a measurement exactly when a fix after the second falls in
// its window, and it is the nearest such fix; the truth is NaN. It
// returns the steps with and without a measurement.
func checkTrackSteps(t *testing.T, p *Problem, seq *Sequence, lp []navlog.LocalPoint, dt float64) (with, missing int) {
	t.Helper()
	p.Run(seq, newRNG(1, 1))
	t0 := lp[1].T
	for k := 1; k <= p.Steps; k++ {
		tk := t0 + dt*float64(k)
		best, bestD := -1, math.Inf(1)
		for i := 2; i < len(lp); i++ {
			if d := math.Abs(lp[i].T - tk); lp[i].T > tk-dt/2 && lp[i].T <= tk+dt/2 && d < bestD {
				best, bestD = i, d
			}
		}
		if got := seq.Has[k-1]; got != (best >= 0) {
			t.Fatalf("step %d: Has %v, want %v", k, got, best >= 0)
		}
		for _, v := range seq.State(k) {
			if !math.IsNaN(v) {
				t.Fatalf("step %d: truth %v, want NaN", k, seq.State(k))
			}
		}
		if best < 0 {
			missing++
			continue
		}
		with++
		if z := seq.Meas(k); z[0] != lp[best].E || z[1] != lp[best].N {
			t.Errorf("step %d: z %v, want fix %d at [%v, %v]", k, z, best, lp[best].E, lp[best].N)
		}
	}
	return with, missing
}

// The GPX car track (104 fixes over 514 s, per the sample's SOURCE.md),
// read with the format taken from the extension, under ct: the steps with
// and without a fix are those of the fix times, at a step of 2 s (below
// the mean interval of 5 s, so most steps are empty) and of 10 s.
func TestTrackGPXSample(t *testing.T) {
	gpx := filepath.Join("..", "..", "shared", "datasets", "gpx-gpxpy-tracks", "around-visnjan-with-car.gpx")
	if _, err := os.Stat(gpx); err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatalf("dataset sample %s is missing under CI: %v", gpx, err)
		}
		t.Skipf("dataset sample %s not found (shared datasets absent): %v", gpx, err)
	}
	tr, err := readTrack("track", gpx, "", "", 15)
	if err != nil {
		t.Fatal(err)
	}
	lp, err := replayLocal(&tr, "0,0")
	if err != nil {
		t.Fatal(err)
	}
	if len(lp) != 104 {
		t.Fatalf("%d fixes, want 104", len(lp))
	}
	for _, dt := range []float64{2, 10} {
		p, err := NewTrack(TrackConfig{File: gpx, Dt: dt, Motion: "ct"})
		if err != nil {
			t.Fatal(err)
		}
		if p.Model.Nx != 5 || p.Model.Linear {
			t.Errorf("ct: nx %d, linear %v", p.Model.Nx, p.Model.Linear)
		}
		var seq Sequence
		with, missing := checkTrackSteps(t, p, &seq, lp, dt)
		t.Logf("dt %g: %d steps with a fix, %d without", dt, with, missing)
		if missing == 0 || with == 0 || (dt == 2 && missing <= with) {
			t.Errorf("dt %g: %d steps with a fix and %d without", dt, with, missing)
		}
	}
}

func TestTrackBadConfig(t *testing.T) {
	for _, c := range []struct {
		cfg  TrackConfig
		want string
	}{
		{TrackConfig{MinPoints: 2}, "MinPoints must be at least 3"},
		{TrackConfig{Sigma: -1}, "Sigma must be"},
		{TrackConfig{Dt: math.Inf(1)}, "Dt must be"},
		{TrackConfig{Motion: "ca"}, "Motion must be cv or ct"},
		{TrackConfig{File: filepath.Join(t.TempDir(), "none.gpx")}, "datasets: track: "},
	} {
		if _, err := NewTrack(c.cfg); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%+v: error %v, want one containing %q", c.cfg, err, c.want)
		}
	}
}

// A suite can name a file of a public dataset of the fetch catalogue as
// "NAME:PATH". It is looked up where `estbench data fetch NAME` puts it;
// when it is not there the error says what to fetch.
func TestRecordingFileFromFetchCatalogue(t *testing.T) {
	cache := t.TempDir()
	t.Setenv("XDG_CACHE_HOME", cache) // os.UserCacheDir on Unix
	t.Setenv("HOME", cache)           // and its fallback on macOS
	_, err := readTrack("track", "gpxpy-tracks:around-visnjan-with-car.gpx", "", "", 15)
	if err == nil || !strings.Contains(err.Error(), "run `estbench data fetch gpxpy-tracks` first") || !errors.Is(err, fs.ErrNotExist) {
		t.Fatalf("missing fetched file: %v", err)
	}
	src := filepath.Join("..", "..", "shared", "datasets", "gpx-gpxpy-tracks", "around-visnjan-with-car.gpx")
	data, err := os.ReadFile(src)
	if err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatalf("dataset sample %s is missing under CI: %v", src, err)
		}
		t.Skipf("dataset sample %s not found (shared datasets absent): %v", src, err)
	}
	dir, err := fetch.DefaultDir("gpxpy-tracks")
	if err != nil {
		t.Fatal(err)
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "around-visnjan-with-car.gpx"), data, 0o644); err != nil {
		t.Fatal(err)
	}
	tr, err := readTrack("track", "gpxpy-tracks:around-visnjan-with-car.gpx", "", "", 15)
	if err != nil {
		t.Fatal(err)
	}
	if len(tr.Points) != 104 { // SOURCE.md: the eTrex 20x drive has 104 points
		t.Fatalf("%d points, want 104", len(tr.Points))
	}
	// A plain path that does not exist names the path.
	if _, err := readTrack("track", "no/such/file.gpx", "", "", 2); err == nil || !strings.Contains(err.Error(), "no/such/file.gpx") {
		t.Fatalf("missing path: %v", err)
	}
}
