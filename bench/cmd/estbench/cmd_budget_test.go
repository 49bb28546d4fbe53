package main

import (
	"encoding/json"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/estbench/estbench/bench"
)

// The 1-2-5 series (1, 2 and 5 times a power of ten) is common practice
// for instrument ranges, no source; the lists below are worked by hand.
func TestParseSweep(t *testing.T) {
	for _, c := range []struct {
		spec  string
		steps int
		want  []int
	}{
		{"100:100000", 0, []int{100, 200, 500, 1000, 2000, 5000, 10000, 20000, 50000, 100000}},
		{"300:5000", 0, []int{300, 500, 1000, 2000, 5000}},
		{"150:180", 0, []int{150, 180}},
		{"7:7", 0, []int{7}},
		{"1:10", 0, []int{1, 2, 5, 10}},
		// 100·1000^(i/3): 100, 1000, 10000, 100000.
		{"100:100000", 4, []int{100, 1000, 10000, 100000}},
		// 10·10^(i/4) rounded: 10, 17.78 → 18, 31.62 → 32, 56.23 → 56, 100.
		{"10:100", 5, []int{10, 18, 32, 56, 100}},
		// Rounded duplicates are dropped: 1, 1.19 → 1, 1.41 → 1, 1.68 → 2, 2.
		{"1:2", 5, []int{1, 2}},
	} {
		got, err := parseSweep(c.spec, c.steps)
		if err != nil || !slices.Equal(got, c.want) {
			t.Errorf("%q steps %d: %v %v, want %v", c.spec, c.steps, got, err, c.want)
		}
	}
	for _, c := range []struct {
		spec  string
		steps int
	}{{"100", 0}, {"a:b", 0}, {"0:10", 0}, {"50:10", 0}, {"1:10", 1}, {"1:10", -2}} {
		if _, err := parseSweep(c.spec, c.steps); err == nil {
			t.Errorf("%q steps %d: no error", c.spec, c.steps)
		}
	}
}

// Sweeping the default suite replaces pf's two configurations by the
// sweep (the one at the default, 1000, has the empty config) and keeps
// kf, ekf and ukf; a suite without a particle filter is refused.
func TestSweepParticles(t *testing.T) {
	s, err := bench.ParseSuite("default", bench.DefaultSuite, bench.Builtin())
	if err != nil {
		t.Fatal(err)
	}
	hash := s.Hash()
	swept, err := sweepParticles(s, []int{100, 1000, 5000})
	if err != nil || !slices.Equal(swept, []string{"pf"}) {
		t.Fatalf("swept %v, %v", swept, err)
	}
	var got []string
	for _, f := range s.Filters {
		got = append(got, strings.TrimSpace(f.Spec.Name+" "+f.Config))
	}
	if want := []string{"kf", "ekf", "ukf", "pf particles=100", "pf", "pf particles=5000"}; !slices.Equal(got, want) {
		t.Errorf("filters %q, want %q", got, want)
	}
	if s.Hash() == hash {
		t.Error("suite hash unchanged by the sweep")
	}
	if _, err := sweepParticles(s, []int{0}); err == nil || !strings.Contains(err.Error(), "outside") {
		t.Errorf("particles 0: %v", err)
	}
	g, err := bench.ParseSuite("g", []byte("name = \"g\"\n[[problem]]\nuse = \"cv2d\"\n[[filter]]\nuse = \"ukf\"\n"), bench.Builtin())
	if err != nil {
		t.Fatal(err)
	}
	if _, err := sweepParticles(g, []int{100}); err == nil || !strings.Contains(err.Error(), "no filter with a particles parameter") {
		t.Errorf("no particle filter: %v", err)
	}
}

const budgetSuite = `
name = "survey-drone-budget"
seed = 2
runs = 6
[[problem]]
use = "cv2d"
steps = 15
[[problem]]
use = "ungm"
steps = 15
[[filter]]
use = "ekf"
[[filter]]
use = "ukf"
[[filter]]
use = "pf"
`

// run --sweep-particles feeds budget: the choice under an evaluation
// budget respects it, in a front that is monotone; exits say whether
// every problem fits.
func TestBudgetOnSweep(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "sweep")
	code, out, errOut := runCLI(t, "run", "--suite", writeSuite(t, budgetSuite), "--sweep-particles", "50:500", "--out", dir, "--format", "csv")
	if code != exitOK {
		t.Fatalf("run: exit %d: %s", code, errOut)
	}
	for _, c := range []string{"particles=50", "particles=100", "particles=200", "particles=500"} {
		if !strings.Contains(out, ",pf,"+c+",") {
			t.Errorf("summary lacks pf %s:\n%s", c, out)
		}
	}
	code, out, errOut = runCLI(t, "budget", dir, "--max-evals-per-step", "450", "--format", "json", "--include-inconsistent", "--include-diverged")
	if code != exitOK {
		t.Fatalf("budget: exit %d: %s", code, errOut)
	}
	var plans []struct {
		Problem string `json:"problem"`
		Cost    string `json:"cost"`
		Best    *struct {
			Filter string  `json:"filter"`
			Cost   float64 `json:"cost"`
			RMSE   float64 `json:"rmse"`
		} `json:"best"`
		Next *struct {
			Cost float64 `json:"cost"`
		} `json:"next"`
		Front []struct {
			Cost float64 `json:"cost"`
			RMSE float64 `json:"rmse"`
		} `json:"front"`
	}
	if err := json.Unmarshal([]byte(out), &plans); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	if len(plans) != 2 {
		t.Fatalf("%d plans, want 2", len(plans))
	}
	for _, p := range plans {
		if p.Cost != "evals_per_step" || p.Best == nil || p.Best.Cost > 450 || (p.Next != nil && p.Next.Cost <= 450) {
			t.Errorf("%s: %+v", p.Problem, p)
		}
		for i := 1; i < len(p.Front); i++ {
			if !(p.Front[i].Cost >= p.Front[i-1].Cost && p.Front[i].RMSE < p.Front[i-1].RMSE) {
				t.Errorf("%s: front not monotone: %+v", p.Problem, p.Front)
			}
		}
	}
	// 3 evaluations a step affords nothing (the ekf needs 4): exit 1.
	code, out, _ = runCLI(t, "budget", "--max-evals-per-step", "3", dir)
	if code != exitFailed || !strings.Contains(out, "nothing within 3 evaluations/step") {
		t.Errorf("tiny budget: exit %d\n%s", code, out)
	}
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{dir}, "give one of"},
		{[]string{dir, "--max-ns-per-step", "1e4", "--max-evals-per-step", "10"}, "give one of"},
		{[]string{dir, "--max-ns-per-step", "-5"}, "must be positive"},
		{[]string{filepath.Join(dir, "none"), "--max-ns-per-step", "1e4"}, "manifest.json"},
		{[]string{dir, "--max-ns-per-step", "1e4", "--format", "csv"}, `unknown format "csv"`},
	} {
		code, _, errOut := runCLI(t, append([]string{"budget"}, c.args...)...)
		if code != exitUsage || !strings.Contains(errOut, c.want) {
			t.Errorf("%v: exit %d %q, want %d naming %q", c.args, code, errOut, exitUsage, c.want)
		}
	}
	if code, _, e := runCLI(t, "run", "--sweep-steps", "3"); code != exitUsage || !strings.Contains(e, "needs --sweep-particles") {
		t.Errorf("--sweep-steps alone: exit %d %q", code, e)
	}
}
