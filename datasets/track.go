package datasets

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/estbench/estbench/filters"
)

// TrackConfig configures NewTrack. Its zero value gives the defaults, our
// own choices, not taken from a publication.
type TrackConfig struct {
	// File, Format, Track and MinPoints choose the recording and the track
	// in it as in RadarReplayConfig; if File is empty, ReplayDefaultFile is
	// looked for under shared/datasets. MinPoints, if zero, is 15; it must
	// be at least 3 (two fixes start the filters, the rest are measured).
	File      string
	Format    string
	Track     string
	MinPoints int
	// Sigma is the standard deviation in m of each horizontal axis of a
	// fix, the filters' measurement noise (of the fixes that state none,
	// with Noise "stated"); if zero, 10.
	Sigma float64
	// Noise says where a fix's noise standard deviation comes from:
	// "stated" takes the accuracy the receiver states for the fix
	// (navlog.Point.HorizStd, from NMEA GST) where it is positive and
	// finite, and Sigma where the fix has none; "fixed" takes Sigma for
	// every fix. If empty, "stated".
	Noise string
	// Dt is the step in s; if zero, 10.
	Dt float64
	// Steps, if positive, keeps only the first Steps steps; if zero, every
	// step up to the last fix.
	Steps int
	// Motion is the filters' motion model: "cv" (constant velocity, state
	// [px, vx, py, vy]) or "ct" (the coordinated turn of ctrb, state [px,
	// vx, py, vy, ω]). If empty, "cv".
	Motion string
	// Q is the acceleration noise intensity in m²/s³ (q of cv, q1 of ct);
	// if zero, 0.1.
	Q float64
	// Q2 is the turn-rate noise intensity of ct in rad²/s³; if zero, 1e-5.
	Q2 float64
}

func (c TrackConfig) withDefaults() (TrackConfig, error) {
	if c.MinPoints == 0 {
		c.MinPoints = 15
	}
	if c.Sigma == 0 {
		c.Sigma = 10
	}
	if c.Dt == 0 {
		c.Dt = 10
	}
	if c.Motion == "" {
		c.Motion = "cv"
	}
	if c.Noise == "" {
		c.Noise = "stated"
	}
	if c.Q == 0 {
		c.Q = 0.1
	}
	if c.Q2 == 0 {
		c.Q2 = 1e-5
	}
	switch {
	case c.MinPoints < 3:
		return c, fmt.Errorf("datasets: track: MinPoints must be at least 3, got %d", c.MinPoints)
	case !positive(c.Sigma):
		return c, fmt.Errorf("datasets: track: Sigma must be a positive finite standard deviation, got %v", c.Sigma)
	case c.Noise != "stated" && c.Noise != "fixed":
		return c, fmt.Errorf("datasets: track: Noise must be stated or fixed, got %q", c.Noise)
	}
	return c, checkTrackMotion("track", c.Dt, c.Steps, c.Motion, c.Q, c.Q2)
}

// NewTrack returns the problem "track": the recorded fixes of a real track
// (AIS CSV, AIS in NMEA, GPX, or a receiver's NMEA GGA/RMC) as the
// measurements, with no ground truth. Nothing is simulated: every run
// replays the same fixes, and runs differ only in a stochastic filter's
// own stream. Problem.NoTruth is set, so RMSE and NEES are not scored;
// what is scored needs no truth: NIS against its bounds and the one-step-
// ahead prediction error pred_rmse, the root mean squared norm of the
// innovation z_k − ẑ_{k|k−1}.
//
// Frame. Fixes are put in metres east and north of the track's first fix
// (at height 0; WGS-84 through ECEF, package geo; heights are ignored).
// Fixes at the time of the one before are dropped.
//
// Steps. Step 0 is at the time of the second fix, t_0; step k is at t_0 +
// k·Dt. The fix nearest t_k within (t_k − Dt/2, t_k + Dt/2] is the
// measurement z_k = [e, n] of step k (the earlier one on a tie); steps with
// no fix in that window have no measurement (Sequence.Has false). A fix is
// thus taken as the position at up to Dt/2 from its own time, an error of
// up to v·Dt/2 at speed v that R does not include: choose Dt at or below
// the usual interval between fixes, or small against σ/v. The last step
// is the one holding the last fix.
//
// Prior. Two-point differencing of the first two fixes, per axis (Bar-
// Shalom, Li & Kirubarajan 2001, "Estimation with Applications to Tracking
// and Navigation", §5.5.3): position z_1, velocity (z_1 − z_0)/T with T
// their time apart, covariance [[σ₁², σ₁²/T], [σ₁²/T, (σ₀² + σ₁²)/T²]]
// with σ₀, σ₁ the noise of the two fixes as below (2σ²/T² when they are
// equal); ct adds ω = 0 with variance 1e-4 rad²/s² (our choice). Neither
// fix is measured again.
//
// Models. cv: x_k = A x_{k-1} + w with the continuous white-noise
// acceleration Q = q [[T³/3, T²/2], [T²/2, T]] per axis (Bar-Shalom et al.
// 2001, §6.2.2); ct: the coordinated turn of ctrb, Q = blockdiag(q M, q
// M, q2 T). The measurement is z = [px, py] + v, v ~ N(0, σ_k² I),
// linear, with σ_k the noise of the fix of step k: with Noise "stated"
// the accuracy its receiver states (navlog.Point.HorizStd, the root mean
// square of the NMEA GST latitude and longitude error standard
// deviations), given to the filters through Model.RAt, and Sigma for a
// fix without one (Model.R = Sigma² I); with Noise "fixed", Sigma for
// every fix. AIS and GPX fixes state no accuracy, so for them the two
// are the same (and the model has no RAt). HDOP is not used: turning it
// into metres needs a range error the log does not give.
//
// Defaults (our choices): the AIS sample ReplayDefaultFile, its longest
// track with at least 15 fixes, Noise "stated", σ = 10 m, Dt = 10 s, cv
// with q = 0.1 m²/s³ (ct: q2 = 1e-5 rad²/s³).
//
// Traits: cv is linear (ct differentiable with analytic Jacobians),
// additive Gaussian noise, as the filters' model; the recorded motion and
// fix errors follow no model, which is what the problem measures. The
// Sequence's Truth and X0 are NaN. Scored components are the positions
// (indices 0 and 2), for the record: without truth nothing is scored.
//
// A missing file is an error that wraps fs.ErrNotExist and says where it
// was looked for.
func NewTrack(cfg TrackConfig) (*Problem, error) {
	c, err := cfg.withDefaults()
	if err != nil {
		return nil, err
	}
	tr, err := readTrack("track", c.File, c.Format, c.Track, c.MinPoints)
	if err != nil {
		return nil, err
	}
	lp, err := replayLocal(&tr, "0,0")
	if err != nil {
		return nil, err
	}
	r := c.Sigma * c.Sigma
	var ts, es, ns, vs []float64 // vs: a fix's noise variance per axis, NaN for r
	for i, p := range lp {
		if math.IsNaN(p.T) || (len(ts) > 0 && !(p.T > ts[len(ts)-1])) {
			continue
		}
		v := math.NaN()
		if h := tr.Points[i].HorizStd; c.Noise == "stated" && positive(h) && positive(h*h) {
			v = h * h
		}
		ts, es, ns, vs = append(ts, p.T), append(es, p.E), append(ns, p.N), append(vs, v)
	}
	if len(ts) < 3 {
		return nil, fmt.Errorf("datasets: track: %s track %s has %d fixes at distinct times, fewer than 3 (does the file give times?)", tr.Source, tr.ID, len(ts))
	}
	t0, dt := ts[1], c.Dt
	last := len(ts) - 1
	steps := stepOf(ts[last], t0, dt)
	if steps < 1 {
		return nil, fmt.Errorf("datasets: track: %s track %s: the fixes after the second span %.3g s, less than half a step of %g s", tr.Source, tr.ID, ts[last]-t0, dt)
	}
	if c.Steps > 0 {
		steps = min(steps, c.Steps)
	}

	const nz = 2
	z := make([]float64, steps*nz)
	has := make([]bool, steps)
	gap := make([]float64, steps) // |t − t_k| of the fix kept at step k
	rv := make([]float64, steps)  // its stated noise variance, NaN for r
	for i := 2; i <= last; i++ {
		k := stepOf(ts[i], t0, dt)
		if k < 1 || k > steps {
			continue
		}
		d := math.Abs(ts[i] - (t0 + float64(k)*dt))
		if has[k-1] && gap[k-1] <= d {
			continue
		}
		has[k-1], gap[k-1] = true, d
		z[(k-1)*nz], z[(k-1)*nz+1] = es[i], ns[i]
		rv[k-1] = vs[i]
	}
	stated := false
	for k := range rv {
		stated = stated || (has[k] && !math.IsNaN(rv[k]))
	}

	ct := c.Motion == "ct"
	nx := 4
	if ct {
		nx = 5
	}
	T1 := ts[1] - ts[0]
	x0 := []float64{es[1], (es[1] - es[0]) / T1, ns[1], (ns[1] - ns[0]) / T1, 0}[:nx]
	p0 := make([]float64, nx*nx)
	r0, r1 := r, r
	if !math.IsNaN(vs[0]) {
		r0 = vs[0]
	}
	if !math.IsNaN(vs[1]) {
		r1 = vs[1]
	}
	for _, o := range []int{0, 2} {
		p0[o*nx+o], p0[o*nx+o+1] = r1, r1/T1
		p0[(o+1)*nx+o], p0[(o+1)*nx+o+1] = r1/T1, (r0+r1)/(T1*T1)
	}
	t, q := dt, c.Q
	m11, m12, m22 := q*t*t*t/3, q*t*t/2, q*t
	var m filters.Model
	if ct {
		p0[24] = 1e-4
		m = ctModel(t, m11, m12, m22, c.Q2*t)
		m.HJac = func(dst, _ []float64, _ int) { positionJac(dst, nx) }
	} else {
		m = cvRangeBearingModel(t, m11, m12, m22)
		m.HJac = func(dst, _ []float64, _ int) { positionJac(dst, nx) }
	}
	m.H = func(dst, x []float64, _ int) { dst[0], dst[1] = x[0], x[2] }
	m.HMany = func(dst, x []float64, _ int) {
		for i, j := 0, 0; i+nx <= len(x); i, j = i+nx, j+nz {
			dst[j], dst[j+1] = x[i], x[i+2]
		}
	}
	m.R = []float64{r, 0, 0, r}
	if stated {
		m.RAt = func(dst []float64, k int) bool {
			if k < 1 || k > steps || math.IsNaN(rv[k-1]) {
				return false
			}
			v := rv[k-1]
			dst[0], dst[1], dst[2], dst[3] = v, 0, 0, v
			return true
		}
	}
	m.Linear = !ct

	sim := func(_ *Problem, seq *Sequence, _ *rand.Rand) {
		seq.Resize(nx, nz, steps)
		for i := range seq.X0 {
			seq.X0[i] = math.NaN()
		}
		for i := range seq.Truth {
			seq.Truth[i] = math.NaN()
		}
		for k := 1; k <= steps; k++ {
			seq.T[k-1] = float64(k) * t
		}
		copy(seq.Z, z)
		copy(seq.Has, has)
	}
	return &Problem{
		Name:     "track",
		Model:    m,
		X0:       x0,
		P0:       p0,
		Steps:    steps,
		Dt:       t,
		Scored:   []int{0, 2},
		Simulate: sim,
		NoTruth:  true,
		Traits: Traits{
			Linear:            !ct,
			Differentiable:    true,
			AnalyticJacobians: true,
			AdditiveNoise:     true,
			GaussianNoise:     true,
		},
	}, nil
}

// stepOf is the step k whose window (t0 + (k − 1/2)·dt, t0 + (k + 1/2)·dt]
// holds time t.
func stepOf(t, t0, dt float64) int {
	return int(math.Ceil((t-t0)/dt - 0.5))
}

// positionJac writes the 2 x nx Jacobian of z = [x0, x2].
func positionJac(dst []float64, nx int) {
	clear(dst[:2*nx])
	dst[0], dst[nx+2] = 1, 1
}
