package datasets

import (
	"errors"
	"fmt"
	"io/fs"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/estbench/estbench/datasets/fetch"
	"github.com/estbench/estbench/datasets/geo"
	"github.com/estbench/estbench/datasets/navlog"
	"github.com/estbench/estbench/filters"
)

// ReplayDefaultFile is the default source of NewRadarReplay, relative to
// the folder that holds the public dataset samples (shared/datasets): the
// MarineCadastre AIS sample of New York Harbor (US Coast Guard NAIS data
// published by BOEM and NOAA; see that folder's SOURCE.md).
const ReplayDefaultFile = "ais-marinecadastre-nyharbor/ais_2022-01-03_nyharbor_0000-0025Z.csv"

// RadarReplayConfig configures NewRadarReplay. Its zero value gives the
// defaults, all of them our own choices for our own scenario (a fixed
// radar watching harbour traffic), not taken from a publication.
type RadarReplayConfig struct {
	// File is the recording to replay. A relative path is resolved
	// against the current directory. If empty, ReplayDefaultFile is
	// looked for under shared/datasets in the current directory and each
	// of its parents in turn (the samples sit beside the project).
	File string
	// Format is "ais-csv" (MarineCadastre CSV export), "ais-nmea"
	// (!AIVDM sentences), "gpx" or "nmea" (a receiver's own fixes). If
	// empty or "auto", it follows the extension: .csv ais-csv, .gpx gpx,
	// .log, .nmea and .txt nmea.
	Format string
	// Track picks the track: a track ID (vessel MMSI, GPX track name,
	// NMEA talker), "#n" for the n-th track of the file (1-based, in the
	// reader's order), or empty for the track with the longest path
	// among those with at least MinPoints points. When an ID has several
	// parts (split at gaps or GPX segments), the longest path is taken.
	Track string
	// MinPoints is the fewest fixes a track needs to be used; if zero, 15.
	MinPoints int
	// Site is the radar's position: "E,N" in metres east and north of the
	// track's first fix, or "geo:LAT,LON" in WGS-84 degrees. If empty,
	// "-3000,2000" (3 km west and 2 km north of the first fix).
	Site string
	// SigmaR is the range noise standard deviation in m; if zero, 15.
	SigmaR float64
	// SigmaTheta is the bearing noise standard deviation in rad; if zero,
	// 2e-3.
	SigmaTheta float64
	// Dt is the step in s the track is resampled to; if zero, 10.
	Dt float64
	// Steps, if positive, keeps only the first Steps steps; if zero, the
	// whole resampled track is used.
	Steps int
	// Motion is the filters' motion model: "cv" (constant velocity,
	// state [px, vx, py, vy]) or "ct" (the coordinated turn of ctrb,
	// state [px, vx, py, vy, ω]). If empty, "cv".
	Motion string
	// Q is the acceleration noise intensity in m²/s³ of the filters'
	// model (q of cv, q1 of ct); if zero, 0.1.
	Q float64
	// Q2 is the turn-rate noise intensity of ct in rad²/s³; if zero, 1e-5.
	Q2 float64
}

// Smoother settings for the truth (our choice): fixes of harbour AIS
// transponders are taken as 10 m per axis, and the motion as continuous
// white-noise acceleration of intensity 0.05 m²/s³.
const (
	replayFixStd  = 10.0
	replaySmoothQ = 0.05
	replayStopped = 0.5 // m/s below which the ct truth's turn rate is set to 0
)

func (c RadarReplayConfig) withDefaults() (RadarReplayConfig, error) {
	if c.MinPoints == 0 {
		c.MinPoints = 15
	}
	if c.Site == "" {
		c.Site = "-3000,2000"
	}
	if c.SigmaR == 0 {
		c.SigmaR = 15
	}
	if c.SigmaTheta == 0 {
		c.SigmaTheta = 2e-3
	}
	if c.Dt == 0 {
		c.Dt = 10
	}
	if c.Motion == "" {
		c.Motion = "cv"
	}
	if c.Q == 0 {
		c.Q = 0.1
	}
	if c.Q2 == 0 {
		c.Q2 = 1e-5
	}
	switch {
	case c.MinPoints < 2:
		return c, fmt.Errorf("datasets: radar-replay: MinPoints must be at least 2, got %d", c.MinPoints)
	case !positive(c.SigmaR):
		return c, fmt.Errorf("datasets: radar-replay: SigmaR must be a positive finite standard deviation, got %v", c.SigmaR)
	case !positive(c.SigmaTheta) || c.SigmaTheta > math.Pi:
		return c, fmt.Errorf("datasets: radar-replay: SigmaTheta must be a standard deviation in (0, π] rad, got %v", c.SigmaTheta)
	}
	return c, checkTrackMotion("radar-replay", c.Dt, c.Steps, c.Motion, c.Q, c.Q2)
}

// NewRadarReplay returns the problem "radar-replay": a real vessel's (or
// device's) recorded track, replayed as the truth, observed by a simulated
// range-bearing radar. The motion is real and the measurement noise is
// known, so RMSE and NEES mean what they do on synthetic problems while
// the truth follows no filter's motion model.
//
// Truth. The track's fixes are put in the east-north-up frame of the
// radar site (at height 0; WGS-84 through ECEF, package geo) and
// smoothed, each axis on its own, by a fixed-interval Rauch-Tung-Striebel
// smoother (Rauch, Tung & Striebel 1965, AIAA J. 3(8)) over the
// continuous white-noise acceleration model (Bar-Shalom, Li &
// Kirubarajan 2001, §6.2.2) with intensity 0.05 m²/s³ and 10 m fix noise
// per axis (our choice). The smoothed positions and velocities at the fix
// times are joined by cubic Hermite interpolation and sampled every Dt
// seconds from the first fix, so the true velocity is the exact
// derivative of the true position. The truth is therefore
// smoothed real motion, the same in every run. For ct the true turn rate
// is that of the interpolated path, (vx ay - vy ax)/(vx² + vy²), and 0
// below 0.5 m/s. Fixes at the time of the previous one are dropped.
//
// Frame. The state is in metres east and north of the radar in its ENU
// frame; heights are ignored (the sea is at the radar's height, and over
// 10 km the Earth's curvature drops the surface by 8 m, changing the
// slant range by millimetres). The measurement is that of ctrb, z =
// [√(px² + py²), atan2(py, px)] + v, v ~ N(0, diag(σ_r², σ_θ²)): the
// bearing is counter-clockwise from east, not a compass bearing, wrapped
// to (-π, π].
//
// Models. cv: state [px, vx, py, vy], x_k = A x_{k-1} + w with the
// continuous white-noise acceleration Q = q [[T³/3, T²/2], [T²/2, T]] per
// axis. ct: the coordinated turn of ctrb (NewCTRB), state [px, vx, py,
// vy, ω], Q = blockdiag(q M, q M, q2 T). Their process noise is the model
// mismatch: how far real manoeuvres are from the model is what this
// problem measures.
//
// Runs. Each run draws the measurement noise and the filters' prior mean
// from its stream: Problem.Run sets X0 to the true initial state plus a
// draw from N(0, P0), with P0 = diag(20² m², 1 m²/s², 20² m², 1 m²/s²)
// (and 1e-4 rad²/s² for ω), so the initial error has the prior's
// distribution and NEES is meaningful. Run thus writes p.X0; each worker
// owns its Problem.
//
// Defaults (our choices): the AIS sample ReplayDefaultFile, the track with
// the longest path among those with at least 15 fixes, a radar 3 km west
// and 2 km north of its first fix (in the harbour sample a shore radar
// on Staten Island overlooking the Narrows, the harbour entrance: our
// scenario), σ_r = 15 m, σ_θ = 2 mrad, Dt =
// 10 s, the cv model with q = 0.1 m²/s³ (ct: q2 = 1e-5 rad²/s³).
//
// Traits: not linear, differentiable (except at the radar), analytic
// Jacobians, additive Gaussian noise. The measurement noise is exactly
// that; the additive Gaussian process noise is the filters' model only,
// since the truth is the real track and does not follow it. Scored
// components: the positions px, py (indices 0 and 2).
//
// A missing file is an error that wraps fs.ErrNotExist and says where it
// was looked for.
func NewRadarReplay(cfg RadarReplayConfig) (*Problem, error) {
	c, err := cfg.withDefaults()
	if err != nil {
		return nil, err
	}
	tr, err := replayTrack(c)
	if err != nil {
		return nil, err
	}
	lp, err := replayLocal(&tr, c.Site)
	if err != nil {
		return nil, err
	}
	ts, ps, err := replaySmooth(lp)
	if err != nil {
		return nil, fmt.Errorf("datasets: radar-replay: %s track %s: %v", tr.Source, tr.ID, err)
	}
	steps := int(math.Floor(ts[len(ts)-1]/c.Dt + 1e-9))
	if steps < 1 {
		return nil, fmt.Errorf("datasets: radar-replay: %s track %s lasts %.3g s, less than one step of %g s", tr.Source, tr.ID, ts[len(ts)-1], c.Dt)
	}
	if c.Steps > 0 {
		steps = min(steps, c.Steps)
	}

	ct := c.Motion == "ct"
	nx := 4
	if ct {
		nx = 5
	}
	const nz = 2
	truth := make([]float64, (steps+1)*nx) // row 0 is the initial state
	for k := 0; k <= steps; k++ {
		x := truth[k*nx : (k+1)*nx]
		var ae, an float64
		x[0], x[1], ae = hermite(ts, ps, 0, float64(k)*c.Dt)
		x[2], x[3], an = hermite(ts, ps, 2, float64(k)*c.Dt)
		if ct {
			if v2 := x[1]*x[1] + x[3]*x[3]; v2 >= replayStopped*replayStopped {
				x[4] = (x[1]*an - x[3]*ae) / v2
			}
		}
	}

	t, q := c.Dt, c.Q
	m11, m12, m22 := q*t*t*t/3, q*t*t/2, q*t
	var m filters.Model
	var p0 []float64
	if ct {
		m = ctModel(t, m11, m12, m22, c.Q2*t)
		p0 = diag(400, 1, 400, 1, 1e-4)
	} else {
		m = cvRangeBearingModel(t, m11, m12, m22)
		p0 = diag(400, 1, 400, 1)
	}
	m.R = []float64{c.SigmaR * c.SigmaR, 0, 0, c.SigmaTheta * c.SigmaTheta}
	m.AngleMeas = []int{1}

	sr, sth := c.SigmaR, c.SigmaTheta
	lp0 := cholOrZero(p0, nx)
	w := make([]float64, nx)
	sim := func(p *Problem, seq *Sequence, rng *rand.Rand) {
		seq.Resize(nx, nz, steps)
		copy(seq.X0, truth[:nx])
		addGaussian(p.X0, truth[:nx], lp0, w, rng)
		copy(seq.Truth, truth[nx:])
		for k := 1; k <= steps; k++ {
			seq.T[k-1] = float64(k) * t
			z := seq.Z[(k-1)*nz : k*nz]
			rangeBearing(z, seq.State(k))
			z[0] += sr * rng.NormFloat64()
			z[1] = wrapPi(z[1] + sth*rng.NormFloat64())
			seq.Has[k-1] = true
		}
	}
	return &Problem{
		Name:     "radar-replay",
		Model:    m,
		X0:       append([]float64(nil), truth[:nx]...),
		P0:       p0,
		Steps:    steps,
		Dt:       t,
		Scored:   []int{0, 2},
		Simulate: sim,
		Traits: Traits{
			Differentiable:    true,
			AnalyticJacobians: true,
			AdditiveNoise:     true,
			GaussianNoise:     true,
		},
	}, nil
}

// ctModel is the coordinated-turn model of ctrb with range and bearing
// from the origin, with process noise blockdiag(M, M, qw), M = [[m11, m12],
// [m12, m22]]; R is left to the caller.
func ctModel(t, m11, m12, m22, qw float64) filters.Model {
	const nx, nz = 5, 2
	return filters.Model{
		Nx: nx, Nz: nz,
		F:    func(dst, x []float64, _ int) { ctMove(dst, x, t) },
		H:    func(dst, x []float64, _ int) { rangeBearing(dst, x) },
		FJac: func(dst, x []float64, _ int) { ctJac(dst, x, t) },
		HJac: func(dst, x []float64, _ int) { rangeBearingJac(dst, x) },
		FMany: func(dst, x []float64, _ int) {
			for i := 0; i+nx <= len(x); i += nx {
				ctMove(dst[i:i+nx], x[i:i+nx], t)
			}
		},
		HMany: func(dst, x []float64, _ int) {
			for i, j := 0, 0; i+nx <= len(x); i, j = i+nx, j+nz {
				rangeBearing(dst[j:j+nz], x[i:i+nx])
			}
		},
		Q: []float64{
			m11, m12, 0, 0, 0,
			m12, m22, 0, 0, 0,
			0, 0, m11, m12, 0,
			0, 0, m12, m22, 0,
			0, 0, 0, 0, qw,
		},
	}
}

// cvRangeBearingModel is constant velocity in the plane, state [px, vx,
// py, vy], with range and bearing from the origin (rangeBearing reads
// components 0 and 2, so its Jacobian's first four columns serve) and
// process noise blockdiag(M, M); R is left to the caller.
func cvRangeBearingModel(t, m11, m12, m22 float64) filters.Model {
	const nx, nz = 4, 2
	a := []float64{
		1, t, 0, 0,
		0, 1, 0, 0,
		0, 0, 1, t,
		0, 0, 0, 1,
	}
	cv := func(dst, x []float64) {
		dst[0] = x[0] + t*x[1]
		dst[1] = x[1]
		dst[2] = x[2] + t*x[3]
		dst[3] = x[3]
	}
	return filters.Model{
		Nx: nx, Nz: nz,
		F:    func(dst, x []float64, _ int) { cv(dst, x) },
		H:    func(dst, x []float64, _ int) { rangeBearing(dst, x) },
		FJac: func(dst, _ []float64, _ int) { copy(dst[:nx*nx], a) },
		HJac: func(dst, x []float64, _ int) {
			var j [10]float64 // rangeBearingJac's 2x5 layout; it reads only x[0] and x[2]
			rangeBearingJac(j[:], x)
			copy(dst[0:4], j[0:4])
			copy(dst[4:8], j[5:9])
		},
		FMany: func(dst, x []float64, _ int) {
			for i := 0; i+nx <= len(x); i += nx {
				cv(dst[i:i+nx], x[i:i+nx])
			}
		},
		HMany: func(dst, x []float64, _ int) {
			for i, j := 0, 0; i+nx <= len(x); i, j = i+nx, j+nz {
				rangeBearing(dst[j:j+nz], x[i:i+nx])
			}
		},
		Q: []float64{
			m11, m12, 0, 0,
			m12, m22, 0, 0,
			0, 0, m11, m12,
			0, 0, m12, m22,
		},
	}
}

// recordingFile returns the path of the recording: file, or the default
// sample ReplayDefaultFile found under shared/datasets in the current
// directory or a parent. who names the problem in errors.
func recordingFile(who, file string) (string, error) { return FindFile(who, file, ReplayDefaultFile) }

// FindFile resolves the file setting of a problem built from recorded
// data: "NAME:PATH" names a file of the fetched public dataset NAME (an
// error says what to fetch when it is missing), another non-empty value is
// a path, and an empty one means the sample def (a slash-separated path
// under shared/datasets) found in the current directory or a parent. who
// names the problem in errors.
func FindFile(who, file, def string) (string, error) {
	if name, rel, ok := strings.Cut(file, ":"); ok {
		if _, known := fetch.Lookup(name); known {
			return fetchedFile(who, name, rel)
		}
	}
	if file != "" {
		return file, nil
	}
	wd, err := os.Getwd()
	if err != nil {
		return "", fmt.Errorf("datasets: %s: no file given and the current directory is unknown: %v", who, err)
	}
	for dir := wd; ; {
		if st, err := os.Stat(filepath.Join(dir, "shared", "datasets")); err == nil && st.IsDir() {
			return filepath.Join(dir, "shared", "datasets", filepath.FromSlash(def)), nil
		}
		up := filepath.Dir(dir)
		if up == dir {
			break
		}
		dir = up
	}
	return "", fmt.Errorf("datasets: %s: no file given and no shared/datasets folder in %s or its parents; "+
		"fetch the public dataset samples beside the project (the default is %s) or give a file: %w", who, wd, def, fs.ErrNotExist)
}

// checkTrackMotion checks the step and motion-model settings that the
// problems built from recorded tracks (radar-replay, track) share.
func checkTrackMotion(who string, dt float64, steps int, motion string, q, q2 float64) error {
	switch {
	case !positive(dt):
		return fmt.Errorf("datasets: %s: Dt must be a positive finite number of seconds, got %v", who, dt)
	case steps < 0:
		return fmt.Errorf("datasets: %s: Steps must not be negative, got %d", who, steps)
	case motion != "cv" && motion != "ct":
		return fmt.Errorf("datasets: %s: Motion must be cv or ct, got %q", who, motion)
	case !positive(q):
		return fmt.Errorf("datasets: %s: Q must be a positive finite noise intensity, got %v", who, q)
	case !positive(q2):
		return fmt.Errorf("datasets: %s: Q2 must be a positive finite noise intensity, got %v", who, q2)
	}
	return nil
}

// fetchedFile resolves "NAME:PATH", a file of the public dataset NAME of
// the fetch catalogue, to its place in the folder `estbench data fetch NAME`
// downloads into. A file not there is an error saying what to fetch.
func fetchedFile(who, name, rel string) (string, error) {
	dir, err := fetch.DefaultDir(name)
	if err != nil {
		return "", fmt.Errorf("datasets: %s: %v", who, err)
	}
	path := filepath.Join(dir, filepath.FromSlash(rel))
	if _, err := os.Stat(path); err != nil {
		return "", fmt.Errorf("datasets: %s: %s:%s is not in %s: run `estbench data fetch %s` first: %w", who, name, rel, dir, name, fs.ErrNotExist)
	}
	return path, nil
}

// replayTrack reads the recording and picks the track cfg names.
func replayTrack(c RadarReplayConfig) (navlog.Track, error) {
	return readTrack("radar-replay", c.File, c.Format, c.Track, c.MinPoints)
}

// readTrack reads a recording (file and format as in
// RadarReplayConfig.File and Format) and picks the track sel names with at
// least minPoints fixes (see RadarReplayConfig.Track). who names the
// problem in errors.
func readTrack(who, file, format, sel string, minPoints int) (navlog.Track, error) {
	path, err := recordingFile(who, file)
	if err != nil {
		return navlog.Track{}, err
	}
	if format == "" || format == "auto" {
		switch strings.ToLower(filepath.Ext(path)) {
		case ".csv":
			format = "ais-csv"
		case ".gpx":
			format = "gpx"
		case ".log", ".nmea", ".txt":
			format = "nmea"
		default:
			return navlog.Track{}, fmt.Errorf("datasets: %s: %s: cannot tell the format from the extension; give ais-csv, ais-nmea, gpx or nmea", who, path)
		}
	}
	f, err := os.Open(path)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) && file == "" {
			return navlog.Track{}, fmt.Errorf("datasets: %s: the default sample %s is missing; fetch the public dataset samples or give a file: %w", who, path, err)
		}
		return navlog.Track{}, fmt.Errorf("datasets: %s: %w", who, err)
	}
	defer f.Close()
	name := filepath.Base(path)
	var tracks []navlog.Track
	var rerr error
	switch format {
	case "ais-csv":
		var r *navlog.AISCSVReader
		tracks, _, r = navlog.ReadAISCSVTracks(f, name, navlog.TrackConfig{})
		rerr = r.Err()
	case "ais-nmea":
		var r *navlog.AISReader
		tracks, _, r = navlog.ReadAISTracks(f, name, navlog.TrackConfig{})
		rerr = r.Err()
	case "gpx":
		var r *navlog.GPXReader
		tracks, r = navlog.ReadGPXTracks(f, name)
		rerr = r.Err()
	case "nmea":
		tr, r := navlog.ReadNMEATrack(f, name, navlog.NMEAConfig{})
		rerr = r.Err()
		if len(tr.Points) > 0 {
			tracks = []navlog.Track{tr}
		}
	default:
		return navlog.Track{}, fmt.Errorf("datasets: %s: Format must be auto, ais-csv, ais-nmea, gpx or nmea, got %q", who, format)
	}
	if rerr != nil {
		return navlog.Track{}, fmt.Errorf("datasets: %s: %s: %v", who, path, rerr)
	}
	return pickTrack(who, tracks, sel, minPoints, path)
}

// pickTrack chooses the track sel names among tracks (see
// RadarReplayConfig.Track).
func pickTrack(who string, tracks []navlog.Track, sel string, minPoints int, path string) (navlog.Track, error) {
	if n, ok := strings.CutPrefix(sel, "#"); ok {
		i, err := strconv.Atoi(n)
		if err != nil || i < 1 || i > len(tracks) {
			return navlog.Track{}, fmt.Errorf("datasets: %s: %s: track %q: the file has tracks #1 to #%d", who, path, sel, len(tracks))
		}
		if len(tracks[i-1].Points) < minPoints {
			return navlog.Track{}, fmt.Errorf("datasets: %s: %s: track %s has %d fixes, fewer than %d", who, path, sel, len(tracks[i-1].Points), minPoints)
		}
		return tracks[i-1], nil
	}
	best, bestLen, found := -1, -1.0, false
	for i := range tracks {
		if sel != "" && tracks[i].ID != sel {
			continue
		}
		found = true
		if len(tracks[i].Points) < minPoints {
			continue
		}
		if l := pathLength(&tracks[i]); l > bestLen {
			best, bestLen = i, l
		}
	}
	switch {
	case sel != "" && !found:
		return navlog.Track{}, fmt.Errorf("datasets: %s: %s: no track with ID %q", who, path, sel)
	case best < 0:
		return navlog.Track{}, fmt.Errorf("datasets: %s: %s: no track %s has at least %d fixes", who, path, orAny(sel), minPoints)
	}
	return tracks[best], nil
}

func orAny(sel string) string {
	if sel == "" {
		return "of the file"
	}
	return strconv.Quote(sel)
}

// pathLength is the sum of the distances between consecutive fixes, in
// metres on the ENU plane of the first fix.
func pathLength(tr *navlog.Track) float64 {
	lp, _ := tr.ToENU(nil)
	var s float64
	for i := 1; i < len(lp); i++ {
		s += math.Hypot(lp[i].E-lp[i-1].E, lp[i].N-lp[i-1].N)
	}
	return s
}

// replayLocal parses the site ("E,N" or "geo:LAT,LON", see
// RadarReplayConfig.Site) and returns the track's fixes in the
// east-north-up frame of the site at height 0: T in seconds since the
// first fix, E and N in metres (U, VE and VN are not set).
func replayLocal(tr *navlog.Track, site string) ([]navlog.LocalPoint, error) {
	rest, isGeo := strings.CutPrefix(site, "geo:")
	a, b, ok := strings.Cut(rest, ",")
	var x, y float64
	var ea, eb error
	if ok {
		x, ea = strconv.ParseFloat(strings.TrimSpace(a), 64)
		y, eb = strconv.ParseFloat(strings.TrimSpace(b), 64)
	}
	if !ok || ea != nil || eb != nil || math.IsNaN(x) || math.IsInf(x, 0) || math.IsNaN(y) || math.IsInf(y, 0) {
		return nil, fmt.Errorf("datasets: radar-replay: Site must be \"E,N\" in metres or \"geo:LAT,LON\" in degrees, got %q", site)
	}
	p0 := tr.Points[0]
	s := geo.Geodetic{Lat: x, Lon: y}
	if isGeo {
		if math.Abs(x) > 90 || math.Abs(y) > 180 {
			return nil, fmt.Errorf("datasets: radar-replay: Site %q: latitude must be in [-90, 90] and longitude in [-180, 180]", site)
		}
	} else {
		f := geo.NewFrame(geo.Geodetic{Lat: p0.Lat, Lon: p0.Lon})
		s = f.FromENU(geo.Vec3{x, y, 0})
		s.H = 0
	}
	f := geo.NewFrame(s)
	out := make([]navlog.LocalPoint, len(tr.Points))
	for i, p := range tr.Points {
		v := f.ENU(geo.Geodetic{Lat: p.Lat, Lon: p.Lon})
		out[i] = navlog.LocalPoint{T: p.T.Sub(p0.T).Seconds(), E: v[0], N: v[1], U: v[2], VE: math.NaN(), VN: math.NaN()}
	}
	return out, nil
}

// replaySmooth smooths the fixes with the RTS smoother described in
// NewRadarReplay and returns the fix times (strictly increasing) and the
// smoothed states, 4 per fix: [e, ve, n, vn].
func replaySmooth(lp []navlog.LocalPoint) (ts, xs []float64, err error) {
	var e, n []float64
	for _, p := range lp {
		if len(ts) > 0 && !(p.T > ts[len(ts)-1]) {
			continue
		}
		if math.IsNaN(p.T) {
			continue
		}
		ts, e, n = append(ts, p.T), append(e, p.E), append(n, p.N)
	}
	if len(ts) < 2 {
		return nil, nil, errors.New("fewer than two fixes at distinct times (does the file give times?)")
	}
	xs = make([]float64, 4*len(ts))
	se, sn := rtsCWNA(ts, e, replaySmoothQ, replayFixStd*replayFixStd), rtsCWNA(ts, n, replaySmoothQ, replayFixStd*replayFixStd)
	for i := range ts {
		xs[4*i], xs[4*i+1], xs[4*i+2], xs[4*i+3] = se[2*i], se[2*i+1], sn[2*i], sn[2*i+1]
	}
	return ts, xs, nil
}

// rtsCWNA smooths the positions y measured at times ts (at least two,
// increasing) with noise variance r under the continuous white-noise
// acceleration model of intensity q, and returns [position, velocity] at
// each time. The prior is the first fix with variance r and the velocity
// of the first two fixes with variance 2r/Δt² + q Δt/3 (common practice,
// no source), so positions on a straight line at constant speed are
// returned unchanged.
func rtsCWNA(ts, y []float64, q, r float64) []float64 {
	n := len(ts)
	type gauss struct{ x0, x1, p00, p01, p11 float64 }
	filt := make([]gauss, n) // filtered at each time
	pred := make([]gauss, n) // predicted to each time from the previous
	d0 := ts[1] - ts[0]
	g := gauss{x0: y[0], x1: (y[1] - y[0]) / d0, p00: r, p11: 2*r/(d0*d0) + q*d0/3}
	for i := 0; i < n; i++ {
		if i > 0 {
			t := ts[i] - ts[i-1]
			g = gauss{
				x0:  g.x0 + t*g.x1,
				x1:  g.x1,
				p00: g.p00 + 2*t*g.p01 + t*t*g.p11 + q*t*t*t/3,
				p01: g.p01 + t*g.p11 + q*t*t/2,
				p11: g.p11 + q*t,
			}
		}
		pred[i] = g
		s := g.p00 + r
		k0, k1 := g.p00/s, g.p01/s
		nu := y[i] - g.x0
		g = gauss{
			x0:  g.x0 + k0*nu,
			x1:  g.x1 + k1*nu,
			p00: g.p00 - k0*g.p00,
			p01: g.p01 - k0*g.p01,
			p11: g.p11 - k1*g.p01,
		}
		filt[i] = g
	}
	out := make([]float64, 2*n)
	sm := filt[n-1]
	out[2*(n-1)], out[2*(n-1)+1] = sm.x0, sm.x1
	for i := n - 2; i >= 0; i-- {
		f, p := filt[i], pred[i+1]
		t := ts[i+1] - ts[i]
		// C = P_f Aᵀ P_p⁻¹ with A = [[1, t], [0, 1]].
		a00, a01 := f.p00+t*f.p01, f.p01
		a10, a11 := f.p01+t*f.p11, f.p11
		det := p.p00*p.p11 - p.p01*p.p01
		c00 := (a00*p.p11 - a01*p.p01) / det
		c01 := (a01*p.p00 - a00*p.p01) / det
		c10 := (a10*p.p11 - a11*p.p01) / det
		c11 := (a11*p.p00 - a10*p.p01) / det
		d0, d1 := sm.x0-p.x0, sm.x1-p.x1
		sm.x0 = f.x0 + c00*d0 + c01*d1
		sm.x1 = f.x1 + c10*d0 + c11*d1
		out[2*i], out[2*i+1] = sm.x0, sm.x1
	}
	return out
}

// hermite evaluates at time t the cubic Hermite interpolant of the
// smoothed states xs (4 per time; position at offset off, velocity at
// off+1) over the times ts, and returns position, velocity and
// acceleration. t is clamped to [ts[0], ts[last]].
func hermite(ts, xs []float64, off int, t float64) (p, v, a float64) {
	n := len(ts)
	t = min(max(t, ts[0]), ts[n-1])
	lo, hi := 0, n-1 // ts[lo] <= t <= ts[hi]
	for hi-lo > 1 {
		mid := (lo + hi) / 2
		if ts[mid] <= t {
			lo = mid
		} else {
			hi = mid
		}
	}
	i := lo
	h := ts[i+1] - ts[i]
	s := (t - ts[i]) / h
	p0, v0 := xs[4*i+off], xs[4*i+off+1]
	p1, v1 := xs[4*(i+1)+off], xs[4*(i+1)+off+1]
	s2, s3 := s*s, s*s*s
	p = (2*s3-3*s2+1)*p0 + (s3-2*s2+s)*h*v0 + (-2*s3+3*s2)*p1 + (s3-s2)*h*v1
	v = ((6*s2-6*s)*p0+(-6*s2+6*s)*p1)/h + (3*s2-4*s+1)*v0 + (3*s2-2*s)*v1
	a = ((12*s-6)*p0+(-12*s+6)*p1)/(h*h) + ((6*s-4)*v0+(6*s-2)*v1)/h
	return p, v, a
}
