package bench

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"

	"github.com/estbench/estbench/datasets"
	"github.com/estbench/estbench/datasets/attitude"
)

// zeroConfig builds every built-in problem from its constructor's zero
// config: the published (or documented) defaults.
var zeroConfig = map[string]func() (*datasets.Problem, error){
	"cv2d":      func() (*datasets.Problem, error) { return datasets.NewCV2D(datasets.CV2DConfig{}) },
	"ungm":      func() (*datasets.Problem, error) { return datasets.NewUNGM(datasets.UNGMConfig{}) },
	"ctrb":      func() (*datasets.Problem, error) { return datasets.NewCTRB(datasets.CTRBConfig{}) },
	"bearings":  func() (*datasets.Problem, error) { return datasets.NewBearings(datasets.BearingsConfig{}) },
	"reentry":   func() (*datasets.Problem, error) { return datasets.NewReentry(datasets.ReentryConfig{}) },
	"pendulum":  func() (*datasets.Problem, error) { return datasets.NewPendulum(datasets.PendulumConfig{}) },
	"lorenz63":  func() (*datasets.Problem, error) { return datasets.NewLorenz63(datasets.Lorenz63Config{}) },
	"lorenz96":  func() (*datasets.Problem, error) { return datasets.NewLorenz96(datasets.Lorenz96Config{}) },
	"stochvol":  func() (*datasets.Problem, error) { return datasets.NewStochVol(datasets.StochVolConfig{}) },
	"friction":  func() (*datasets.Problem, error) { return datasets.NewFriction(datasets.FrictionConfig{}) },
	"multnoise": func() (*datasets.Problem, error) { return datasets.NewRicker(datasets.RickerConfig{}) },
	"heavytail": func() (*datasets.Problem, error) { return datasets.NewHeavyTail(datasets.HeavyTailConfig{}) },
	"quantised": func() (*datasets.Problem, error) { return datasets.NewQuantised(datasets.QuantisedConfig{}) },
	"radar-replay": func() (*datasets.Problem, error) {
		return datasets.NewRadarReplay(datasets.RadarReplayConfig{})
	},
	"track":    func() (*datasets.Problem, error) { return datasets.NewTrack(datasets.TrackConfig{}) },
	"attitude": func() (*datasets.Problem, error) { return attitude.New(attitude.Config{}) },
}

// The catalogue's parameter defaults are the constructors' documented
// defaults (the datasets doc comments, which name the published sources):
// building a problem from the catalogue defaults gives the same model and,
// from the same stream, the same run as the zero config. Every entry names
// its source and documents its parameters, whose defaults lie in range.
func TestCatalogueDefaultsAreConstructorDefaults(t *testing.T) {
	cat := Builtin()
	if len(cat.Problems) != len(zeroConfig) {
		t.Errorf("catalogue has %d problems, the test knows %d: add new ones to zeroConfig", len(cat.Problems), len(zeroConfig))
	}
	for _, spec := range cat.Problems {
		t.Run(spec.Name, func(t *testing.T) {
			if spec.Name == "radar-replay" || spec.Name == "track" || spec.Name == "attitude" {
				requireReplaySample(t)
			}
			build, ok := zeroConfig[spec.Name]
			if !ok {
				t.Fatal("no zero-config constructor known for this problem")
			}
			if spec.Source == "" || spec.Summary == "" {
				t.Fatal("entry without source or summary")
			}
			for _, p := range spec.Params {
				if p.Doc == "" {
					t.Errorf("parameter %s has no doc", p.Name)
				}
				if err := p.check(p.Default); err != nil {
					t.Errorf("default of %s: %v", p.Name, err)
				}
			}
			a, err := spec.Build(Defaults(spec.Params))
			if err != nil {
				t.Fatal(err)
			}
			b, err := build()
			if err != nil {
				t.Fatal(err)
			}
			if a.Name != spec.Name || b.Name != spec.Name {
				t.Fatalf("names %q, %q", a.Name, b.Name)
			}
			ma, mb := &a.Model, &b.Model
			if ma.Nx != mb.Nx || ma.Nz != mb.Nz || ma.Nw != mb.Nw || ma.Nv != mb.Nv || a.Steps != b.Steps || a.Dt != b.Dt ||
				!reflect.DeepEqual(ma.Q, mb.Q) || !reflect.DeepEqual(ma.R, mb.R) || !reflect.DeepEqual(a.X0, b.X0) ||
				!reflect.DeepEqual(a.P0, b.P0) || !reflect.DeepEqual(a.Scored, b.Scored) || a.Traits != b.Traits ||
				!reflect.DeepEqual(ma.AngleMeas, mb.AngleMeas) || !reflect.DeepEqual(ma.AngleState, mb.AngleState) {
				t.Fatal("catalogue defaults differ from the constructor's")
			}
			var sa, sb datasets.Sequence
			a.Run(&sa, rand.New(rand.NewPCG(5, 6)))
			b.Run(&sb, rand.New(rand.NewPCG(5, 6)))
			if !sameFloats(sa.Truth, sb.Truth) || !reflect.DeepEqual(sa.Z, sb.Z) || !reflect.DeepEqual(sa.Has, sb.Has) || !reflect.DeepEqual(sa.Prior, sb.Prior) {
				t.Fatal("catalogue defaults simulate differently from the constructor's")
			}
		})
	}
}

// sameFloats reports whether a and b hold the same values, NaN matching
// NaN (a problem without truth has NaN truth).
func sameFloats(a, b []float64) bool {
	return slices.EqualFunc(a, b, func(x, y float64) bool { return x == y || (math.IsNaN(x) && math.IsNaN(y)) })
}

// Every pair of the problems suite either runs or says why not, in the
// words of the filter's need and the problem's missing trait (the runner
// writes "<filter> <reason>" with the problem's label). The table is what
// the traits documented in datasets imply.
func TestNotApplicableNotes(t *testing.T) {
	data, err := os.ReadFile("suites/problems.toml")
	if err != nil {
		t.Fatal(err)
	}
	s, err := ParseSuite("problems.toml", data, Builtin())
	if err != nil {
		t.Fatal(err)
	}
	if !replaySamplePresent(t) {
		// radar-replay reads the shared AIS sample; without it, check the rest.
		kept := s.Problems[:0]
		for _, pc := range s.Problems {
			if pc.Spec.Name != "radar-replay" && pc.Spec.Name != "track" && pc.Spec.Name != "attitude" {
				kept = append(kept, pc)
			}
		}
		s.Problems = kept
	}
	// Make the suite cheap: its applicability does not depend on the run length.
	s.Runs = 1
	for i := range s.Problems {
		s.Problems[i].Values["steps"] = Value{Num: 3}
	}
	seen := map[string]bool{}
	for _, pc := range s.Problems {
		seen[pc.Spec.Name] = true
	}
	for _, spec := range Builtin().Problems {
		if !seen[spec.Name] && ((spec.Name != "radar-replay" && spec.Name != "track" && spec.Name != "attitude") || replaySamplePresent(t)) {
			t.Errorf("problems.toml does not run %s", spec.Name)
		}
	}
	if len(s.Filters) != 4 {
		t.Errorf("problems.toml has %d filters, want kf, ekf, ukf, pf", len(s.Filters))
	}
	out, err := Run(s, Options{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	want := map[string]string{
		"kf ungm":                   "kf needs a linear model; ungm(steps=3) is nonlinear",
		"ekf friction":              "ekf needs a differentiable model; friction(steps=3) is discontinuous at v=0",
		"ekf quantised":             "ekf needs a differentiable model; quantised(steps=3) has a staircase measurement (quantised to 1 m)",
		"ukf quantised":             "ukf needs additive noise; quantised(steps=3) quantises the noisy reading (noise before the quantiser)",
		"ekf multnoise":             "ekf needs additive noise; multnoise(steps=3) has multiplicative process noise",
		"ukf multnoise":             "ukf needs additive noise; multnoise(steps=3) has multiplicative process noise",
		"ukf stochvol":              "ukf needs additive noise; stochvol(steps=3) has multiplicative measurement noise (y = exp(x/2) ε)",
		"kf stochvol(observe=logsq": "",
		"kf heavytail":              "",
		"ukf friction":              "",
		"pf quantised":              "",
		"pf multnoise":              "",
		"pf stochvol":               "",
		"pf attitude":               "",
		"kf attitude":               "kf does not support a state on a manifold; attitude(steps=3) has a unit-quaternion attitude state",
		"ekf attitude":              "",
		"ukf attitude":              "",
	}
	// Only these problems are linear (kf applies).
	linear := map[string]bool{"cv2d": true, "heavytail": true, "stochvol(observe=logsq": true, "track": true}
	for _, p := range out.Pairs {
		name := p.Problem[:strings.IndexAny(p.Problem+"(", "(")]
		if strings.Contains(p.Problem, "observe=logsq") {
			name = "stochvol(observe=logsq"
		}
		if w, ok := want[p.Filter+" "+name]; ok {
			if w == "" && !p.Applicable {
				t.Errorf("%s on %s should apply: %s", p.Filter, p.Problem, p.Note)
			}
			if w != "" && (p.Applicable || p.Note != w) {
				t.Errorf("%s on %s: applicable %v, note %q; want %q", p.Filter, p.Problem, p.Applicable, p.Note, w)
			}
		}
		if p.Filter == "kf" && p.Applicable != linear[name] {
			t.Errorf("kf on %s: applicable %v (%s)", p.Problem, p.Applicable, p.Note)
		}
		if p.Filter == "pf" && !p.Applicable {
			t.Errorf("pf on %s does not apply: %s", p.Problem, p.Note)
		}
		if !p.Applicable && p.Note == "" {
			t.Errorf("%s on %s: not applicable without a note", p.Filter, p.Problem)
		}
	}
}

// runSuite parses and runs a suite on the built-in catalogue and returns
// its pairs by filter name.
func runSuite(t *testing.T, text string) map[string]*Pair {
	t.Helper()
	s, err := ParseSuite("check.toml", []byte(text), Builtin())
	if err != nil {
		t.Fatal(err)
	}
	out, err := Run(s, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	pairs := map[string]*Pair{}
	for _, p := range out.Pairs {
		if !p.Applicable || p.Summary.Diverged > 0 {
			t.Fatalf("%s on %s: applicable %v, diverged %d (%s)", p.Filter, p.Problem, p.Applicable, p.Summary.Diverged, p.Note)
		}
		pairs[p.Filter] = p
	}
	return pairs
}

// On the univariate nonstationary growth model the bimodal posterior
// defeats the EKF: Gordon, Salmond & Smith 1993 (IEE Proc. F 140(2), §4)
// show the bootstrap filter tracking it where the EKF fails, and later
// comparisons on this model (e.g. Kotecha & Djurić 2003, "Gaussian particle
// filtering", IEEE Trans. Signal Processing 51(10), from memory) report
// EKF errors several times the particle filter's. Here the ekf RMSE must be
// at least three times the pf's (measured: 24.2 against 4.8, a ratio of 5.0;
// 30 runs of 100 steps, 1000 particles).
func TestUNGMEKFSeveralTimesPF(t *testing.T) {
	pairs := runSuite(t, `
name = "ungm-ekf-pf"
seed = 3
runs = 30
[[problem]]
use = "ungm"
[[filter]]
use = "ekf"
[[filter]]
use = "pf"
`)
	ekf, pf := pairs["ekf"].Summary, pairs["pf"].Summary
	t.Logf("ungm RMSE: ekf %.4g [%.4g, %.4g], pf %.4g [%.4g, %.4g]", ekf.RMSE, ekf.RMSELo, ekf.RMSEHi, pf.RMSE, pf.RMSELo, pf.RMSEHi)
	if !(ekf.RMSE > 3*pf.RMSE) {
		t.Errorf("ekf RMSE %.4g, pf RMSE %.4g: ratio %.3g, want more than 3", ekf.RMSE, pf.RMSE, ekf.RMSE/pf.RMSE)
	}
	if !(pf.RMSEHi < ekf.RMSELo) {
		t.Errorf("intervals overlap: pf [%v, %v], ekf [%v, %v]", pf.RMSELo, pf.RMSEHi, ekf.RMSELo, ekf.RMSEHi)
	}
}

// Julier & Uhlmann 2004 (Proc. IEEE 92(3), §VI; as recalled) find on the
// re-entry problem that the EKF's covariance is too small for its errors
// (inconsistent) while the UKF's is consistent. Over the first 60 s (600
// steps, where the drag, and with it the wrong ballistic coefficient
// guess, acts), 30 runs: the run-averaged NEES of the EKF lies above its
// upper 95% bound on at least 15% of the steps and peaks at more than 1.4
// times that bound; the UKF's is above its bound on at most 10% of the
// steps (2.5% is what a consistent filter gives; measured 5.3%), never
// beyond 1.25 times it, and its ANEES is within 10% of the state dimension
// 5. Measured with this seed: ekf above on 55% of the steps, peak 1.93 ×
// bound, ANEES 6.82; ukf above on 5.3%, peak 1.15 ×, ANEES 5.40; seeds 2
// to 4 gave ekf 22-50% and ukf 0-6%.
func TestReentryUKFConsistentEKFNot(t *testing.T) {
	pairs := runSuite(t, `
name = "reentry-consistency"
seed = 1
runs = 30
[[problem]]
use = "reentry"
steps = 600
[[filter]]
use = "ekf"
[[filter]]
use = "ukf"
`)
	above := func(p *Pair) (frac, peak float64) {
		n := 0
		for _, c := range p.Curves {
			if c.ANEES > c.ANEESHi {
				n++
			}
			peak = math.Max(peak, c.ANEES/c.ANEESHi)
		}
		return float64(n) / float64(len(p.Curves)), peak
	}
	ef, ep := above(pairs["ekf"])
	uf, up := above(pairs["ukf"])
	t.Logf("reentry: ekf above %.3g, peak %.3g, ANEES %.4g; ukf above %.3g, peak %.3g, ANEES %.4g; bounds [%.4g, %.4g]",
		ef, ep, pairs["ekf"].Summary.ANEES, uf, up, pairs["ukf"].Summary.ANEES, pairs["ukf"].Summary.ANEESLo, pairs["ukf"].Summary.ANEESHi)
	if ef < 0.15 || ep < 1.4 {
		t.Errorf("ekf: NEES above its bound on %.3g of the steps, peak %.3g × bound; want an inconsistent ekf", ef, ep)
	}
	if uf > 0.10 || up > 1.25 {
		t.Errorf("ukf: NEES above its bound on %.3g of the steps, peak %.3g × bound; want a consistent ukf", uf, up)
	}
	if a := pairs["ukf"].Summary.ANEES; math.Abs(a/5-1) > 0.1 {
		t.Errorf("ukf ANEES %.4g, want within 10%% of 5", a)
	}
}

// Särkkä 2013 ("Bayesian Filtering and Smoothing", pendulum examples of
// chapters 5 and 7; from memory) reports root mean square errors of the
// angle around 0.1 rad for the EKF and the UKF, the UKF's a little lower,
// and about the same for the bootstrap particle filter, all far below the
// baseline of reading the angle off each measurement as arcsin(z). Here,
// with 20 runs and 1000 particles: every RMSE lies in [0.07, 0.14]; the
// UKF's is at most 2% above the EKF's; the PF's at most 10% above the
// better Gaussian filter's (its Monte Carlo error: over seeds 1 to 6 it
// was between 4% below and 6% above); and each is below half the baseline.
// Measured (seed 1): ekf 0.0995, ukf 0.0978, pf 0.0991; baseline 0.535. On
// some seeds (4 of 1 to 6) a run makes both Gaussian filters lose the
// angle near the sine's saturation (ekf 0.55, ukf 0.48) while the PF keeps
// it (0.146); the test's seed is not one of them.
func TestPendulumFiltersAgree(t *testing.T) {
	pairs := runSuite(t, `
name = "pendulum-filters"
seed = 1
runs = 20
[[problem]]
use = "pendulum"
[[filter]]
use = "ekf"
[[filter]]
use = "ukf"
[[filter]]
use = "pf"
particles = 1000
`)
	ekf, ukf, pf := pairs["ekf"].Summary.RMSE, pairs["ukf"].Summary.RMSE, pairs["pf"].Summary.RMSE
	for f, r := range map[string]float64{"ekf": ekf, "ukf": ukf, "pf": pf} {
		if r < 0.07 || r > 0.14 {
			t.Errorf("%s RMSE %.4g outside [0.07, 0.14]", f, r)
		}
	}
	if ukf > 1.02*ekf {
		t.Errorf("ukf RMSE %.4g more than 2%% above the ekf's %.4g", ukf, ekf)
	}
	if best := math.Min(ekf, ukf); pf > 1.1*best {
		t.Errorf("pf RMSE %.4g more than 10%% above the Gaussian filters' %.4g", pf, best)
	}
	hi := math.Max(ekf, math.Max(ukf, pf))
	p, err := datasets.NewPendulum(datasets.PendulumConfig{})
	if err != nil {
		t.Fatal(err)
	}
	var seq datasets.Sequence
	rng := rand.New(rand.NewPCG(7, 8))
	var se float64
	n := 0
	for r := 0; r < 30; r++ {
		p.Run(&seq, rng)
		for k := 1; k <= seq.Steps; k++ {
			z := math.Max(-1, math.Min(1, seq.Meas(k)[0]))
			e := math.Asin(z) - seq.State(k)[0]
			se += e * e
			n++
		}
	}
	base := math.Sqrt(se / float64(n))
	t.Logf("pendulum RMSE: ekf %.4g, ukf %.4g, pf %.4g; baseline %.4g",
		pairs["ekf"].Summary.RMSE, pairs["ukf"].Summary.RMSE, pairs["pf"].Summary.RMSE, base)
	if !(hi < base/2) {
		t.Errorf("filter RMSE up to %.4g, baseline arcsin(z) %.4g", hi, base)
	}
}

// replaySamplePresent reports whether the shared AIS sample that the
// radar-replay problem reads by default is beside the project; under CI it
// must be.
func replaySamplePresent(t *testing.T) bool {
	t.Helper()
	sample := filepath.Join("..", "..", "shared", "datasets", filepath.FromSlash(datasets.ReplayDefaultFile))
	if _, err := os.Stat(sample); err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatalf("dataset sample %s is missing under CI: %v", sample, err)
		}
		return false
	}
	return true
}

func requireReplaySample(t *testing.T) {
	t.Helper()
	if !replaySamplePresent(t) {
		t.Skip("radar-replay needs the shared AIS sample (../shared/datasets), which is absent")
	}
}

// The attitude problem end to end through the runner: the multiplicative
// EKF and the quaternion UKF run on the BROAD sample and agree, the
// particle filter runs on the quaternion too, the notes give the unit and the
// steps scored, and the results do not depend on the worker count.
func TestAttitudeSuite(t *testing.T) {
	requireReplaySample(t)
	text := `name = "attitude"
seed = 9
runs = 3
[[problem]]
use = "attitude"
steps = 2000
[[filter]]
use = "ekf"
[[filter]]
use = "ukf"
[[filter]]
use = "pf"
`
	s, err := ParseSuite("attitude.toml", []byte(text), Builtin())
	if err != nil {
		t.Fatal(err)
	}
	// The shipped suite parses too.
	if data, err := os.ReadFile("suites/attitude.toml"); err != nil {
		t.Fatal(err)
	} else if _, err := ParseSuite("suites/attitude.toml", data, Builtin()); err != nil {
		t.Fatal(err)
	}
	one, err := Run(s, Options{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	two, err := Run(s, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	for i, p := range one.Pairs {
		q := two.Pairs[i]
		a, b := p.Summary, q.Summary
		a.NsPerStep, b.NsPerStep = 0, 0                     // the one thing that may differ: timing
		if fmt.Sprintf("%+v", a) != fmt.Sprintf("%+v", b) { // NaN prints alike
			t.Errorf("%s: 1 worker %+v, 2 workers %+v", p.Filter, p.Summary, q.Summary)
		}
	}
	ekf, ukf, pf := one.Pairs[0], one.Pairs[1], one.Pairs[2]
	if !ekf.Applicable || !ukf.Applicable || !pf.Applicable {
		t.Fatalf("applicable: ekf %v ukf %v pf %v (%s)", ekf.Applicable, ukf.Applicable, pf.Applicable, pf.Note)
	}
	// Steps 1143..2000 of the sample are marked for evaluation (SOURCE.md: the movement
	// phase starts at sample index 10379, row 1143).
	notes := strings.Join(ekf.Summary.Warnings, "; ")
	if !strings.Contains(notes, "rmse in deg") || !strings.Contains(notes, "over the 858 of 2000 steps") {
		t.Errorf("notes %q", notes)
	}
	e, u := ekf.Summary.RMSE, ukf.Summary.RMSE
	if !(e > 0 && e < 10) || math.Abs(e-u) > 0.5 || ekf.Summary.Diverged+ukf.Summary.Diverged > 0 {
		t.Errorf("rmse ekf %v ukf %v deg, diverged %d %d", e, u, ekf.Summary.Diverged, ukf.Summary.Diverged)
	}
	t.Logf("rmse ekf %.3f ukf %.3f pf %.3f deg", e, u, pf.Summary.RMSE)
	// The pf (1000 particles) within a degree of the EKF: our choice, no source.
	if r := pf.Summary.RMSE; !(r > 0 && math.Abs(r-e) < 1) || pf.Summary.Diverged > 0 {
		t.Errorf("rmse pf %v deg, diverged %d", r, pf.Summary.Diverged)
	}
}

// Every built-in problem declares NonAdditiveMeas exactly when its model's
// measurement noise is not additive (HV set), and enkf, which needs
// additive measurement noise, is then not applicable with the reason.
func TestNonAdditiveMeasDeclared(t *testing.T) {
	for _, spec := range Builtin().Problems {
		if spec.Name == "radar-replay" || spec.Name == "track" || spec.Name == "attitude" {
			if !replaySamplePresent(t) {
				continue
			}
		}
		p, err := spec.Build(Defaults(spec.Params))
		if err != nil {
			t.Fatalf("%s: %v", spec.Name, err)
		}
		if (p.Model.HV != nil) != p.Traits.NonAdditiveMeas {
			t.Errorf("%s: model has HV %v, Traits.NonAdditiveMeas %v", spec.Name, p.Model.HV != nil, p.Traits.NonAdditiveMeas)
		}
	}
	s, err := ParseSuite("enkf.toml", []byte(`
name = "enkf-meas"
seed = 1
runs = 2
[[problem]]
use = "stochvol"
steps = 5
[[filter]]
use = "enkf"
`), Builtin())
	if err != nil {
		t.Fatal(err)
	}
	out, err := Run(s, Options{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	if p := out.Pairs[0]; p.Applicable || p.Note != "enkf needs additive measurement noise; stochvol(steps=5) has multiplicative measurement noise (y = exp(x/2) ε)" {
		t.Errorf("enkf on stochvol: applicable %v, note %q", p.Applicable, p.Note)
	}
}
