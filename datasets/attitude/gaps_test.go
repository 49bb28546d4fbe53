package attitude_test

import (
	"math"
	"path/filepath"
	"strings"
	"testing"

	"github.com/estbench/estbench/bench"
	"github.com/estbench/estbench/datasets/attitude"
	"github.com/estbench/estbench/datasets/recorded"
)

// A reference that loses the target for a while (BROAD's optical
// reference has 2,226 NaN orientation samples in trial 21, SOURCE.md) is
// not a divergence: the rows without truth are left out of the scores,
// the filters run through them, and the note counts the steps scored.
// Run through the suite runner on an .arrow recording with 100 rows of the
// movement phase blanked.
func TestTruthGapsNotScored(t *testing.T) {
	rec := attitude.BROADRecording(t)
	for _, name := range []string{"true_quat_w", "true_quat_x", "true_quat_y", "true_quat_z"} {
		c := rec.Column(name)
		c.Valid = recorded.NewBitmap(rec.Len())
		for i := range c.Values {
			if i >= 2000 && i < 2100 {
				c.Values[i] = math.NaN()
				continue
			}
			c.Valid.Set(i)
		}
	}
	file := filepath.Join(t.TempDir(), "gaps.arrow")
	if err := recorded.WriteFile(file, rec); err != nil {
		t.Fatal(err)
	}
	suite := `name = "gaps"
seed = 2
runs = 2
[[problem]]
use = "attitude"
file = "` + filepath.ToSlash(file) + `"
[[filter]]
use = "ekf"
[[filter]]
use = "ukf"
`
	s, err := bench.ParseSuite("gaps.toml", []byte(suite), bench.Builtin())
	if err != nil {
		t.Fatal(err)
	}
	out, err := bench.Run(s, bench.Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range out.Pairs {
		notes := strings.Join(p.Summary.Warnings, "; ")
		// 4,571 marked steps (SOURCE.md), all 100 blanked rows among them.
		if p.Summary.Diverged != 0 || !(p.Summary.RMSE > 0 && p.Summary.RMSE < 15) || !strings.Contains(notes, "over the 4471 of 5713 steps") {
			t.Errorf("%s: diverged %d, rmse %v, notes %q", p.Filter, p.Summary.Diverged, p.Summary.RMSE, notes)
		}
	}
}
