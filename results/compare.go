package results

import (
	"errors"
	"fmt"
	"hash/fnv"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/estbench/estbench/metrics"
)

// Verdicts of a compared row.
const (
	VerdictBetter = "better"
	VerdictWorse  = "worse"
	VerdictSame   = "same"
	VerdictNew    = "new"  // only in the new folder, or runs now and did not before
	VerdictGone   = "gone" // only in the base folder
)

// Runtime verdicts of a compared row; "" when either time is missing.
const (
	TimeFaster = "faster"
	TimeSlower = "slower"
	TimeSame   = "same"
)

// CompareFormats lists the formats of WriteComparison.
var CompareFormats = []string{"table", "markdown", "json"}

// CompareColumns are the keys of each object of the json format of
// WriteComparison, in order. Changes are fractions (0.05 is +5%); a value
// that does not exist is null.
var CompareColumns = []string{
	"problem", "filter", "config", "verdict", "why", "paired",
	"base_runs", "new_runs", "base_diverged", "new_diverged", "base_runs_used", "new_runs_used",
	"base_rmse", "new_rmse", "rmse_change", "rmse_change_lo", "rmse_change_hi",
	"base_anees", "new_anees", "base_anees_mark", "new_anees_mark",
	"anees_change", "anees_change_lo", "anees_change_hi",
	"base_ns_per_step", "new_ns_per_step", "time_ratio", "time_verdict",
}

// CompareOptions set the tolerances of Compare. The zero value gives the
// defaults.
type CompareOptions struct {
	// Tolerance is the relative change within which an interval counts as
	// no change (same). If zero, 0.02 is used.
	Tolerance float64
	// TimeTolerance is the relative change of the runtime ratio that counts
	// as no change. If zero, 0.25 is used.
	TimeTolerance float64
	// Level is the confidence level of the intervals. If zero, 0.95 is used.
	Level float64
	// Resamples is the number of bootstrap resamples. If zero,
	// metrics.DefaultResamples is used.
	Resamples int
	// AllowMismatch lets folders of different suites or seeds be compared;
	// with different seeds the rows are compared unpaired.
	AllowMismatch bool
}

func (o CompareOptions) withDefaults() CompareOptions {
	if o.Tolerance == 0 {
		o.Tolerance = 0.02
	}
	if o.TimeTolerance == 0 {
		o.TimeTolerance = 0.25
	}
	if o.Level == 0 {
		o.Level = 0.95
	}
	if o.Resamples == 0 {
		o.Resamples = metrics.DefaultResamples
	}
	return o
}

// ResultDir is a result folder read back: its manifest, summary and runs.
type ResultDir struct {
	Dir      string
	Manifest Manifest
	Summary  []SummaryRow
	Runs     []RunRow
}

// ReadResultDir reads manifest.json, summary.parquet and runs.parquet of
// dir. Errors name the folder or the file.
func ReadResultDir(dir string) (*ResultDir, error) {
	st, err := os.Stat(dir)
	if err != nil {
		return nil, fmt.Errorf("results: %w", err)
	}
	if !st.IsDir() {
		return nil, fmt.Errorf("results: %s is not a directory", dir)
	}
	d := &ResultDir{Dir: dir}
	if d.Manifest, err = ReadManifest(filepath.Join(dir, "manifest.json")); err != nil {
		return nil, err
	}
	if d.Summary, err = ReadSummaryParquet(filepath.Join(dir, "summary.parquet")); err != nil {
		return nil, err
	}
	if d.Runs, err = ReadRunsParquet(filepath.Join(dir, "runs.parquet")); err != nil {
		return nil, err
	}
	return d, nil
}

// ErrMismatch is returned (wrapped) by Compare when the folders come from
// different suites or seeds and AllowMismatch is not set.
var ErrMismatch = errors.New("results: the folders come from different suites or seeds")

// CompareSide says where one side of a comparison came from.
type CompareSide struct {
	Dir      string
	Manifest Manifest
}

// Comparison is the result of Compare.
type Comparison struct {
	Base, New CompareSide
	Options   CompareOptions // with the defaults filled in
	// Paired is true when the seeds are equal and runs were matched by
	// index; false when each side was resampled on its own.
	Paired bool
	// Changes lists what differs between the manifests: suite, its hash,
	// seed, runs, tool version, VCS revision (one line each).
	Changes []string
	Rows    []CompareRow
}

// CompareRow is one (problem, filter, config) of a comparison. Metrics that
// do not exist (a side without the row, a pair that does not apply, too
// few runs) are NaN; marks are "" then.
type CompareRow struct {
	Problem, Filter, Config string

	Verdict string   // VerdictBetter, VerdictWorse, VerdictSame, VerdictNew or VerdictGone
	Why     []string // what made the verdict, and anything that limits it

	BaseRuns, NewRuns         int // runs attempted (0 when the side lacks the row or it does not apply)
	BaseDiverged, NewDiverged int // diverged runs, from the summaries
	BaseUsed, NewUsed         int // runs that entered the changes (equal when paired)

	BaseRMSE, NewRMSE                      float64 // from the summaries
	RMSEChange, RMSEChangeLo, RMSEChangeHi float64 // relative change and its interval

	BaseANEES, NewANEES                       float64 // from the summaries
	BaseMark, NewMark                         string  // "in", "high" or "low": ANEES against its 95% bounds
	ANEESChange, ANEESChangeLo, ANEESChangeHi float64

	BaseANEESLo, BaseANEESHi, NewANEESLo, NewANEESHi float64 // the bounds behind the marks

	BaseNsPerStep, NewNsPerStep float64
	TimeRatio                   float64 // NewNsPerStep / BaseNsPerStep
	TimeVerdict                 string  // TimeFaster, TimeSlower, TimeSame, or ""
}

// Count returns the number of rows with verdict v.
func (c *Comparison) Count(v string) int {
	n := 0
	for i := range c.Rows {
		if c.Rows[i].Verdict == v {
			n++
		}
	}
	return n
}

// CountTime returns the number of rows with runtime verdict v.
func (c *Comparison) CountTime(v string) int {
	n := 0
	for i := range c.Rows {
		if c.Rows[i].TimeVerdict == v {
			n++
		}
	}
	return n
}

type rowKey struct{ problem, filter, config string }

func (k rowKey) String() string {
	s := k.filter
	if k.config != "" {
		s += " " + k.config
	}
	return s + " on " + k.problem
}

// Compare compares the new result folder cur with the base folder: the
// regression gate of estbench (last night's results against tonight's, made
// from the same suite and seed).
//
// # Pairing
//
// Rows are matched by (problem, filter, config). Run r of a problem draws
// its truth and measurements from a stream derived from (seed, problem, r)
// only, so when both folders have the same seed, run r of the base and run
// r of the new folder saw the same data, and the comparison is paired: the
// runs both sides have and both completed are resampled together (the same
// run indices for base and new), which removes the run-to-run spread of the
// data from the change. When the seeds differ (allowed only with
// AllowMismatch) the runs are unrelated and each side is resampled on its
// own (unpaired); the intervals are then wider.
//
// # Changes
//
// With e_r the mean squared error of run r (its rmse squared) and a_r its
// ANEES, over the runs used on each side:
//
//	rmse change  = sqrt( mean e_r(new) / mean e_r(base) ) − 1
//	anees change = exp( mean log a_r(new) − mean log a_r(base) ) − 1
//
// The rmse change is that of the summary's RMSE restricted to those runs.
// The anees change is that of the geometric mean of the runs' ANEES: the
// ANEES of a run whose covariance collapsed (a particle filter left with
// one distinct particle) can be many orders of magnitude above the others,
// so the arithmetic mean of a few dozen runs, and any bootstrap of it, is
// decided by whether that run is drawn; on the log scale it is one run
// among many. The interval at Level is the percentile bootstrap interval
// (Efron & Tibshirani 1993, "An Introduction to the Bootstrap", §13.3) of
// the same statistic over Resamples resamples of the runs, from a stream
// seeded by the row's key, so the same folders always give the same
// intervals. Paired resampling uses metrics.Bootstrap.
//
// # Verdicts
//
// A relative change of a quantity where lower is better is judged from its
// interval [lo, hi] with tolerance t: same when it covers zero or lies
// within [−t, t]; worse when lo > 0 (and hi > t); better when hi < 0 (and
// lo < −t); same when it cannot be formed (fewer than two runs), with a
// note. A row's verdict is worse if any of these parts is worse, better if
// some part is better and none is worse, and same otherwise:
//
//   - accuracy: the rmse change.
//   - divergence: paired, worse when more of the common runs diverged on the
//     new side than on the base side, better when fewer (any rise counts: the
//     same data made the filter fail where it did not before); unpaired, the
//     difference of the diverged fractions is judged by its independent
//     bootstrap interval with tolerance 0 (worse when the whole interval is
//     above zero), since different data make different runs fail.
//   - consistency, from each side's summary ANEES and its 95% chi-square
//     bounds: worse when ANEES was inside its bounds and is now outside,
//     better when it was outside and is now inside (unpaired, only when
//     the interval of the anees change also lies beyond zero and the
//     tolerance in that direction, since with different data a filter
//     whose ANEES lies near a bound, or is heavy-tailed, crosses it by
//     chance; otherwise the move is noted and counts as same); when it is
//     outside on the same side on both (high on both, or low on both), the
//     anees change is judged as above, in the direction away from the
//     bounds (higher is worse when high, lower is worse when low); when it
//     crossed from one side to the other, worse when its distance
//     |log(ANEES/nearest bound)| grew by more than log(1+t), better when it
//     shrank by more.
//
// A row only in the base folder is gone, one only in the new folder is new.
// A row that ran in the base folder and no longer applies in the new one is
// worse; one that did not apply before and now runs is new.
//
// Runtime has its own verdict, never folded into the row's verdict: the
// ratio of the new to the base ns_per_step (each a median over runs) is
// slower above 1+TimeTolerance, faster below 1/(1+TimeTolerance), same
// between. Timings depend on the machine and its load, so no interval is
// formed: the tolerance absorbs the noise.
//
// # Errors
//
// Compare returns an error wrapping ErrMismatch when the suites or seeds
// differ and opt.AllowMismatch is false, and an error naming the folder
// and file when the files disagree with each other (duplicate rows, a
// summary row without its runs).
func Compare(base, cur *ResultDir, opt CompareOptions) (*Comparison, error) {
	opt = opt.withDefaults()
	bm, nm := base.Manifest, cur.Manifest
	c := &Comparison{
		Base:    CompareSide{Dir: base.Dir, Manifest: bm},
		New:     CompareSide{Dir: cur.Dir, Manifest: nm},
		Options: opt,
		Paired:  bm.Seed == nm.Seed,
		Changes: manifestChanges(bm, nm),
	}
	if (bm.SuiteSHA256 != nm.SuiteSHA256 || bm.Seed != nm.Seed) && !opt.AllowMismatch {
		return nil, fmt.Errorf("%w (suite %q sha256 %s, seed %d in %s; suite %q sha256 %s, seed %d in %s): "+
			"their runs did not see the same data; use --allow-mismatch to compare them anyway",
			ErrMismatch, bm.Suite, shortSHA(bm.SuiteSHA256), bm.Seed, base.Dir, nm.Suite, shortSHA(nm.SuiteSHA256), nm.Seed, cur.Dir)
	}
	bs, err := indexSummary(base)
	if err != nil {
		return nil, err
	}
	ns, err := indexSummary(cur)
	if err != nil {
		return nil, err
	}
	br, err := indexRuns(base)
	if err != nil {
		return nil, err
	}
	nr, err := indexRuns(cur)
	if err != nil {
		return nil, err
	}
	for _, side := range []struct {
		d    *ResultDir
		runs map[rowKey][]metrics.RunStat
	}{{base, br}, {cur, nr}} {
		for i := range side.d.Summary {
			r := &side.d.Summary[i]
			k := rowKey{r.Problem, r.Filter, r.Config}
			if r.Applicable && len(side.runs[k]) == 0 {
				return nil, fmt.Errorf("results: %s: no runs of %s, which summary.parquet says ran %d times",
					filepath.Join(side.d.Dir, "runs.parquet"), k, r.Runs)
			}
		}
	}
	for i := range base.Summary {
		b := &base.Summary[i]
		k := rowKey{b.Problem, b.Filter, b.Config}
		n, ok := ns[k]
		if !ok {
			c.Rows = append(c.Rows, oneSided(k, b, nil))
			continue
		}
		c.Rows = append(c.Rows, compareRow(k, b, n, br[k], nr[k], c.Paired, opt))
	}
	for i := range cur.Summary {
		n := &cur.Summary[i]
		k := rowKey{n.Problem, n.Filter, n.Config}
		if _, ok := bs[k]; !ok {
			c.Rows = append(c.Rows, oneSided(k, nil, n))
		}
	}
	return c, nil
}

func shortSHA(sha string) string {
	if len(sha) > 12 {
		return sha[:12]
	}
	if sha == "" {
		return "(none)"
	}
	return sha
}

// manifestChanges lists the differences that matter for a comparison.
func manifestChanges(b, n Manifest) []string {
	var ch []string
	diff := func(what, x, y string) {
		if x != y {
			ch = append(ch, what+": "+x+" → "+y)
		}
	}
	diff("suite", strconv.Quote(b.Suite), strconv.Quote(n.Suite))
	diff("suite sha256", shortSHA(b.SuiteSHA256), shortSHA(n.SuiteSHA256))
	diff("seed", strconv.FormatUint(b.Seed, 10), strconv.FormatUint(n.Seed, 10))
	diff("runs", strconv.Itoa(b.Runs), strconv.Itoa(n.Runs))
	diff("tool version", b.Version, n.Version)
	diff("vcs revision", manifestRevision(b), manifestRevision(n))
	return ch
}

func manifestRevision(m Manifest) string {
	r := m.VCSRevision
	if r == "" {
		r = "(unknown)"
	} else if len(r) > 12 {
		r = r[:12]
	}
	if m.VCSModified != nil && *m.VCSModified {
		r += " (modified)"
	}
	return r
}

func indexSummary(d *ResultDir) (map[rowKey]*SummaryRow, error) {
	m := make(map[rowKey]*SummaryRow, len(d.Summary))
	for i := range d.Summary {
		r := &d.Summary[i]
		k := rowKey{r.Problem, r.Filter, r.Config}
		if _, dup := m[k]; dup {
			return nil, fmt.Errorf("results: %s: %s appears twice", filepath.Join(d.Dir, "summary.parquet"), k)
		}
		m[k] = r
	}
	return m, nil
}

// indexRuns groups the runs by row, each group sorted by run index.
func indexRuns(d *ResultDir) (map[rowKey][]metrics.RunStat, error) {
	m := map[rowKey][]metrics.RunStat{}
	for i := range d.Runs {
		r := &d.Runs[i]
		k := rowKey{r.Problem, r.Filter, r.Config}
		m[k] = append(m[k], r.RunStat)
	}
	for k, rs := range m {
		slices.SortStableFunc(rs, func(a, b metrics.RunStat) int { return a.Run - b.Run })
		for i := 1; i < len(rs); i++ {
			if rs[i].Run == rs[i-1].Run {
				return nil, fmt.Errorf("results: %s: run %d of %s appears twice", filepath.Join(d.Dir, "runs.parquet"), rs[i].Run, k)
			}
		}
	}
	return m, nil
}

// newCompareRow fills the parts of a row that come from the summaries.
func newCompareRow(k rowKey, b, n *SummaryRow) CompareRow {
	r := CompareRow{Problem: k.problem, Filter: k.filter, Config: k.config}
	nan := math.NaN()
	r.BaseRMSE, r.NewRMSE, r.BaseANEES, r.NewANEES = nan, nan, nan, nan
	r.RMSEChange, r.RMSEChangeLo, r.RMSEChangeHi = nan, nan, nan
	r.ANEESChange, r.ANEESChangeLo, r.ANEESChangeHi = nan, nan, nan
	r.BaseANEESLo, r.BaseANEESHi, r.NewANEESLo, r.NewANEESHi = nan, nan, nan, nan
	r.BaseNsPerStep, r.NewNsPerStep, r.TimeRatio = nan, nan, nan
	if b != nil && b.Applicable {
		r.BaseRuns, r.BaseDiverged = b.Runs, b.Diverged
		r.BaseRMSE, r.BaseANEES, r.BaseNsPerStep = b.RMSE, b.ANEES, b.NsPerStep
		r.BaseANEESLo, r.BaseANEESHi = b.ANEESLo, b.ANEESHi
		r.BaseMark = aneesMark(b.ANEES, b.ANEESLo, b.ANEESHi)
	}
	if n != nil && n.Applicable {
		r.NewRuns, r.NewDiverged = n.Runs, n.Diverged
		r.NewRMSE, r.NewANEES, r.NewNsPerStep = n.RMSE, n.ANEES, n.NsPerStep
		r.NewANEESLo, r.NewANEESHi = n.ANEESLo, n.ANEESHi
		r.NewMark = aneesMark(n.ANEES, n.ANEESLo, n.ANEESHi)
	}
	return r
}

// oneSided is a row that only one folder has.
func oneSided(k rowKey, b, n *SummaryRow) CompareRow {
	r := newCompareRow(k, b, n)
	if b != nil {
		r.Verdict = VerdictGone
		r.Why = []string{"not in the new results"}
	} else {
		r.Verdict = VerdictNew
		r.Why = []string{"not in the base results"}
	}
	return r
}

// boundsMark says whether v is inside [lo, hi] ("in"), above ("high") or
// below ("low"); "" when any is NaN.
func aneesMark(v, lo, hi float64) string {
	switch {
	case math.IsNaN(v) || math.IsNaN(lo) || math.IsNaN(hi):
		return ""
	case v > hi:
		return "high"
	case v < lo:
		return "low"
	}
	return "in"
}

// judge gives the verdict of the interval [lo, hi] of a relative change of
// a quantity where lower is better, with tolerance tol; ok is false when
// the interval could not be formed.
func cmpJudge(lo, hi, tol float64) (v string, ok bool) {
	switch {
	case math.IsNaN(lo) || math.IsNaN(hi):
		return VerdictSame, false
	case lo <= 0 && hi >= 0, lo >= -tol && hi <= tol:
		return VerdictSame, true
	case lo > 0:
		return VerdictWorse, true
	}
	return VerdictBetter, true
}

// used holds the per-run values that enter the changes of one side.
type used struct {
	mse, lanees []float64 // squared rmse and log ANEES
	div         []float64 // 1 for a diverged run, 0 otherwise (unpaired divergence)
}

func compareRow(k rowKey, b, n *SummaryRow, bruns, nruns []metrics.RunStat, paired bool, opt CompareOptions) CompareRow {
	r := newCompareRow(k, b, n)
	switch {
	case !b.Applicable && !n.Applicable:
		r.Verdict = VerdictSame
		r.Why = []string{"does not apply on either side"}
		return r
	case !n.Applicable:
		r.Verdict = VerdictWorse
		r.Why = []string{"no longer runs: " + n.Note}
		return r
	case !b.Applicable:
		r.Verdict = VerdictNew
		r.Why = []string{"runs now; before: " + b.Note}
		return r
	}
	seed := keySeed(k)
	var parts []string
	var why []string

	// Runs used, and the divergence part.
	var bu, nu used
	if paired {
		bd, nd, common := 0, 0, 0
		i, j := 0, 0
		for i < len(bruns) && j < len(nruns) {
			x, y := &bruns[i], &nruns[j]
			switch {
			case x.Run < y.Run:
				i++
				continue
			case x.Run > y.Run:
				j++
				continue
			}
			i++
			j++
			common++
			if x.Diverged {
				bd++
			}
			if y.Diverged {
				nd++
			}
			if cmpUsable(x) && cmpUsable(y) {
				bu.mse, bu.lanees = append(bu.mse, x.RMSE*x.RMSE), append(bu.lanees, math.Log(x.ANEES))
				nu.mse, nu.lanees = append(nu.mse, y.RMSE*y.RMSE), append(nu.lanees, math.Log(y.ANEES))
			}
		}
		switch {
		case nd > bd:
			parts = append(parts, VerdictWorse)
			why = append(why, fmt.Sprintf("diverged %d → %d of the %d common runs", bd, nd, common))
		case nd < bd:
			parts = append(parts, VerdictBetter)
			why = append(why, fmt.Sprintf("diverged %d → %d of the %d common runs", bd, nd, common))
		}
		if common < len(bruns) || common < len(nruns) {
			why = append(why, fmt.Sprintf("%d runs in common (base %d, new %d)", common, len(bruns), len(nruns)))
		}
	} else {
		for _, s := range []struct {
			runs []metrics.RunStat
			u    *used
		}{{bruns, &bu}, {nruns, &nu}} {
			for i := range s.runs {
				x := &s.runs[i]
				d := 0.0
				if x.Diverged {
					d = 1
				}
				s.u.div = append(s.u.div, d)
				if cmpUsable(x) {
					s.u.mse, s.u.lanees = append(s.u.mse, x.RMSE*x.RMSE), append(s.u.lanees, math.Log(x.ANEES))
				}
			}
		}
		fb, fn := cmpSum(bu.div)/float64(len(bu.div)), cmpSum(nu.div)/float64(len(nu.div))
		if fb != fn {
			lo, hi := bootstrapTwo(len(bu.div), len(nu.div), opt.Resamples, seed^0x646976, opt.Level,
				func(ib, in []int) float64 { return cmpMeanAt(nu.div, in) - cmpMeanAt(bu.div, ib) })
			v, _ := cmpJudge(lo, hi, 0)
			text := fmt.Sprintf("diverged %d of %d → %d of %d", int(cmpSum(bu.div)), len(bu.div), int(cmpSum(nu.div)), len(nu.div))
			if v == VerdictSame {
				text += " (within chance for unpaired runs)"
			} else {
				parts = append(parts, v)
			}
			why = append(why, text)
		}
	}
	r.BaseUsed, r.NewUsed = len(bu.mse), len(nu.mse)

	// Accuracy and the anees change.
	rmseStat := func(eb, en []float64) func(ib, in []int) float64 {
		return func(ib, in []int) float64 { return math.Sqrt(cmpMeanAt(en, in)/cmpMeanAt(eb, ib)) - 1 }
	}
	aneesStat := func(lb, ln []float64) func(ib, in []int) float64 {
		return func(ib, in []int) float64 { return math.Exp(cmpMeanAt(ln, in)-cmpMeanAt(lb, ib)) - 1 }
	}
	r.RMSEChange, r.RMSEChangeLo, r.RMSEChangeHi = cmpChange(bu.mse, nu.mse, paired, opt, seed, rmseStat(bu.mse, nu.mse))
	r.ANEESChange, r.ANEESChangeLo, r.ANEESChangeHi = cmpChange(bu.lanees, nu.lanees, paired, opt, seed, aneesStat(bu.lanees, nu.lanees))
	v, ok := cmpJudge(r.RMSEChangeLo, r.RMSEChangeHi, opt.Tolerance)
	if !ok {
		why = append(why, fmt.Sprintf("no interval from %d and %d usable runs (2 needed)", r.BaseUsed, r.NewUsed))
	}
	if v != VerdictSame {
		parts = append(parts, v)
		why = append(why, "RMSE "+pctInterval(r.RMSEChange, r.RMSEChangeLo, r.RMSEChangeHi))
	}

	// Consistency.
	cv, text := cmpConsistency(&r, paired, opt.Tolerance)
	if cv != VerdictSame {
		parts = append(parts, cv)
	}
	if text != "" {
		why = append(why, text)
	}

	r.Verdict = VerdictSame
	for _, p := range parts {
		if p == VerdictWorse {
			r.Verdict = VerdictWorse
			break
		}
		r.Verdict = VerdictBetter
	}
	r.Why = why

	// Runtime.
	r.TimeRatio = r.NewNsPerStep / r.BaseNsPerStep
	switch t := 1 + opt.TimeTolerance; {
	case math.IsNaN(r.TimeRatio) || math.IsInf(r.TimeRatio, 0):
		r.TimeRatio = math.NaN()
	case r.TimeRatio > t:
		r.TimeVerdict = TimeSlower
	case r.TimeRatio < 1/t:
		r.TimeVerdict = TimeFaster
	default:
		r.TimeVerdict = TimeSame
	}
	return r
}

// cmpConsistency is the consistency part of a row's verdict and the text
// that explains it ("" when there is nothing to say).
func cmpConsistency(r *CompareRow, paired bool, tol float64) (string, string) {
	bm, nm := r.BaseMark, r.NewMark
	// towards judges the anees change in the direction of mark: a rise
	// when high, a fall when low.
	towards := func(mark string) string {
		lo, hi := r.ANEESChangeLo, r.ANEESChangeHi
		if mark == "low" {
			lo, hi = -hi, -lo
		}
		v, _ := cmpJudge(lo, hi, tol)
		return v
	}
	change := "ANEES " + pctInterval(r.ANEESChange, r.ANEESChangeLo, r.ANEESChangeHi)
	switch {
	case bm == "" || nm == "" || (bm == "in" && nm == "in"):
		return VerdictSame, ""
	case bm == "in":
		text := "ANEES left its bounds (in → " + nm + ")"
		if !paired && towards(nm) != VerdictWorse {
			return VerdictSame, text + ", but " + change + " is within chance for unpaired runs"
		}
		return VerdictWorse, text
	case nm == "in":
		text := "ANEES now inside its bounds (" + bm + " → in)"
		if !paired && towards(bm) != VerdictBetter {
			return VerdictSame, text + ", but " + change + " is within chance for unpaired runs"
		}
		return VerdictBetter, text
	case bm == nm:
		v := towards(bm)
		if v == VerdictSame {
			return v, ""
		}
		return v, change + ", " + bm + " on both sides"
	}
	db := aneesDistance(r.BaseANEES, r.BaseANEESLo, r.BaseANEESHi)
	dn := aneesDistance(r.NewANEES, r.NewANEESLo, r.NewANEESHi)
	text := fmt.Sprintf("ANEES crossed its bounds (%s → %s)", bm, nm)
	switch l := math.Log1p(tol); {
	case dn > db+l:
		return VerdictWorse, text + ", further from them"
	case dn < db-l:
		return VerdictBetter, text + ", closer to them"
	}
	return VerdictSame, ""
}

// boundsDistance is |log(v/b)| for the bound b nearest v.
func aneesDistance(v, lo, hi float64) float64 {
	if v > hi {
		return math.Log(v / hi)
	}
	return math.Log(lo / v)
}

// cmpUsable reports whether a run enters the changes: it completed, with a
// finite rmse and a finite positive ANEES (for its logarithm).
func cmpUsable(s *metrics.RunStat) bool {
	return !s.Diverged && cmpFinite(s.RMSE) && cmpFinite(s.ANEES) && s.ANEES > 0
}

func cmpFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

func cmpSum(v []float64) float64 {
	s := 0.0
	for _, x := range v {
		s += x
	}
	return s
}

// meanAt is the mean of v at the indices idx.
func cmpMeanAt(v []float64, idx []int) float64 {
	s := 0.0
	for _, i := range idx {
		s += v[i]
	}
	return s / float64(len(idx))
}

// change returns a statistic on all runs and its interval: paired through
// metrics.Bootstrap (the same indices for both sides, which needs equal
// lengths), unpaired through bootstrapTwo.
func cmpChange(b, n []float64, paired bool, opt CompareOptions, seed uint64, stat func(ib, in []int) float64) (v, lo, hi float64) {
	if len(b) == 0 || len(n) == 0 {
		return math.NaN(), math.NaN(), math.NaN()
	}
	v = stat(cmpIdentity(len(b)), cmpIdentity(len(n)))
	if paired {
		lo, hi = metrics.Bootstrap(len(b), opt.Resamples, seed, opt.Level, func(idx []int) float64 { return stat(idx, idx) })
	} else {
		lo, hi = bootstrapTwo(len(b), len(n), opt.Resamples, seed, opt.Level, stat)
	}
	return v, lo, hi
}

func cmpIdentity(n int) []int {
	idx := make([]int, n)
	for i := range idx {
		idx[i] = i
	}
	return idx
}

// keySeed is the bootstrap seed of a row: FNV-1a of its key, so rows are
// resampled independently of each other and the same row always the same.
func keySeed(k rowKey) uint64 {
	h := fnv.New64a()
	h.Write([]byte(k.problem + "\x00" + k.filter + "\x00" + k.config))
	return h.Sum64()
}

// compareStream is the second PCG seed word of the unpaired bootstrap.
const compareStream = 0x636f6d70617265 // "compare"

// bootstrapTwo is the percentile bootstrap interval of a two-sample
// statistic, resampling nb indices of the first sample and nn of the second
// independently, with replacement (Efron & Tibshirani 1993, §8.3 for the
// two-sample scheme, §13.3 for the percentile interval). Quantiles are
// metrics.Quantile's. Fewer than two observations on either side, or a
// NaN statistic, give NaN ends.
func bootstrapTwo(nb, nn, B int, seed uint64, level float64, stat func(ib, in []int) float64) (lo, hi float64) {
	if nb < 2 || nn < 2 {
		return math.NaN(), math.NaN()
	}
	rng := rand.New(rand.NewPCG(seed, compareStream))
	ib, in := make([]int, nb), make([]int, nn)
	vals := make([]float64, B)
	for k := range vals {
		for i := range ib {
			ib[i] = rng.IntN(nb)
		}
		for i := range in {
			in[i] = rng.IntN(nn)
		}
		vals[k] = stat(ib, in)
		if math.IsNaN(vals[k]) {
			return math.NaN(), math.NaN()
		}
	}
	return metrics.Quantile(vals, (1-level)/2), metrics.Quantile(vals, (1+level)/2)
}

// pctInterval writes a relative change and its interval in percent.
func pctInterval(v, lo, hi float64) string {
	s := pctChange(v)
	if !math.IsNaN(lo) && !math.IsNaN(hi) {
		s += " [" + pctChange(lo) + ", " + pctChange(hi) + "]"
	}
	return s
}

// pct writes a relative change in percent with two decimals and a sign.
func pctChange(v float64) string {
	switch {
	case math.IsNaN(v):
		return missing
	case math.IsInf(v, 1):
		return "+inf%"
	case math.IsInf(v, -1):
		return "-inf%"
	}
	p := 100 * v
	s := strconv.FormatFloat(p, 'f', 2, 64)
	if math.Abs(p) >= tooWide {
		s = strconv.FormatFloat(p, 'e', 2, 64)
	}
	if !strings.HasPrefix(s, "-") {
		s = "+" + s
	}
	return s + "%"
}

// WriteComparison writes c in one of CompareFormats: "table" (for a
// terminal), "markdown" (for a CI comment) or "json" (an array of objects
// with the keys of CompareColumns, one per row, exact float64 values, null
// where a value does not exist, why joined by "; "). The human formats
// start with a headline counting the verdicts, where each side came from,
// what changed between them and how the rows were paired, and end with the
// numbered notes (the why of each row) and the verdict rules.
func WriteComparison(w io.Writer, format string, c *Comparison) error {
	switch format {
	case "table":
		return writeComparisonHuman(w, c, false)
	case "markdown":
		return writeComparisonHuman(w, c, true)
	case "json":
		return writeComparisonJSON(w, c)
	}
	return fmt.Errorf("results: unknown format %q (valid: %s)", format, strings.Join(CompareFormats, ", "))
}

// Headline is the one-line count of the verdicts, e.g. "2 worse, 1 better,
// 10 same, 0 new, 0 gone; runtime: 0 slower, 3 faster".
func (c *Comparison) Headline() string {
	return fmt.Sprintf("%d worse, %d better, %d same, %d new, %d gone; runtime: %d slower, %d faster",
		c.Count(VerdictWorse), c.Count(VerdictBetter), c.Count(VerdictSame), c.Count(VerdictNew), c.Count(VerdictGone),
		c.CountTime(TimeSlower), c.CountTime(TimeFaster))
}

// sideLine says where one side came from.
func sideLine(s CompareSide) string {
	m := s.Manifest
	parts := []string{
		"suite " + strconv.Quote(m.Suite) + " sha256 " + shortSHA(m.SuiteSHA256),
		"seed " + strconv.FormatUint(m.Seed, 10),
		strconv.Itoa(m.Runs) + " runs",
		m.Tool + " " + m.Version + " rev " + manifestRevision(m),
	}
	if !m.End.IsZero() {
		parts = append(parts, m.End.UTC().Format(time.RFC3339))
	}
	return s.Dir + ": " + strings.Join(parts, ", ")
}

// pairingLine says how the rows were compared.
func (c *Comparison) pairingLine() string {
	o := c.Options
	how := fmt.Sprintf("%d bootstrap resamples, %s intervals, tolerance ±%s, time tolerance %s",
		o.Resamples, pctOf(o.Level), pctOf(o.Tolerance), pctOf(o.TimeTolerance))
	if c.Paired {
		return "paired: both sides have seed " + strconv.FormatUint(c.Base.Manifest.Seed, 10) +
			", so run r saw the same data on both; runs are resampled together; " + how
	}
	return fmt.Sprintf("UNPAIRED: the seeds differ (%d, %d), so run r saw different data on each side; "+
		"each side is resampled on its own and the intervals are wider; %s",
		c.Base.Manifest.Seed, c.New.Manifest.Seed, how)
}

func pctOf(f float64) string { return strconv.FormatFloat(100*f, 'g', -1, 64) + "%" }

// rules explains the verdicts under the human formats.
func (c *Comparison) rules() string {
	o := c.Options
	t := 1 + o.TimeTolerance
	return "ΔRMSE: relative change of the RMSE over the runs used; ΔANEES: of the geometric mean of the runs' ANEES, which a run with a collapsed covariance cannot dominate. " +
		"verdict: worse (better) when the interval of ΔRMSE lies above (below) zero and reaches beyond ±" + pctOf(o.Tolerance) +
		"; when more (fewer) runs diverged (paired: any change on the common runs; unpaired: when the interval of the diverged fractions excludes zero)" +
		"; when ANEES leaves (enters) its 95% chi-square bounds (unpaired: only with ΔANEES beyond chance in that direction), or, outside them on the same side on both, moves away from (towards) them beyond the tolerance. " +
		"A row is worse when any part is worse. " +
		"time: ratio of the median ns/step, new/base; slower above " + strconv.FormatFloat(t, 'f', 2, 64) +
		", faster below " + strconv.FormatFloat(1/t, 'f', 2, 64) + "; it never changes the row's verdict."
}

// Column indices of the human comparison.
const (
	cProblem = iota
	cFilter
	cConfig
	cVerdict
	cRMSE
	cRMSEChange
	cANEES
	cANEESChange
	cDiverged
	cTime
	cTimeRatio
	cTimeVerdict
	cNotes
	cColumns
)

func buildComparisonHuman(c *Comparison) *human {
	var rmse, anees, ns []float64
	for i := range c.Rows {
		r := &c.Rows[i]
		rmse = append(rmse, r.BaseRMSE, r.NewRMSE)
		anees = append(anees, r.BaseANEESLo, r.BaseANEESHi, r.NewANEESLo, r.NewANEESHi)
		ns = append(ns, r.BaseNsPerStep, r.NewNsPerStep)
	}
	scRMSE, scANEES, scTime := magnitudeScale(rmse), magnitudeScale(anees), timeScale(ns)
	level := pctOf(c.Options.Level)
	h := &human{
		head: []string{
			"problem", "filter", "config", "verdict",
			withFactor("RMSE", scRMSE) + " base → new", "ΔRMSE [" + level + " CI]",
			withFactor("ANEES", scANEES) + " base → new", "ΔANEES [" + level + " CI]",
			"diverged", scTime.label + "/step base → new", "time ratio", "time", "notes",
		},
		right: []bool{false, false, false, false, true, true, true, true, true, true, true, false, false},
	}
	arrow := func(a, b string) string { return a + " → " + b }
	marked := func(v float64, mark string) string {
		s := scANEES.format(v)
		if mark != "" {
			s += " " + mark
		}
		return s
	}
	count := func(runs, n int) string {
		if runs == 0 {
			return missing
		}
		return strconv.Itoa(n)
	}
	index := map[string]int{}
	for i := range c.Rows {
		r := &c.Rows[i]
		cell := make([]string, cColumns)
		cell[cProblem], cell[cFilter], cell[cConfig], cell[cVerdict] = r.Problem, r.Filter, r.Config, r.Verdict
		if cell[cConfig] == "" {
			cell[cConfig] = "default"
		}
		cell[cRMSE] = arrow(scRMSE.format(r.BaseRMSE), scRMSE.format(r.NewRMSE))
		cell[cRMSEChange] = pctInterval(r.RMSEChange, r.RMSEChangeLo, r.RMSEChangeHi)
		cell[cANEES] = arrow(marked(r.BaseANEES, r.BaseMark), marked(r.NewANEES, r.NewMark))
		cell[cANEESChange] = pctInterval(r.ANEESChange, r.ANEESChangeLo, r.ANEESChangeHi)
		cell[cDiverged] = arrow(count(r.BaseRuns, r.BaseDiverged), count(r.NewRuns, r.NewDiverged))
		cell[cTime] = arrow(scTime.format(r.BaseNsPerStep), scTime.format(r.NewNsPerStep))
		cell[cTimeRatio] = missing
		if !math.IsNaN(r.TimeRatio) {
			cell[cTimeRatio] = strconv.FormatFloat(r.TimeRatio, 'f', 2, 64)
		}
		cell[cTimeVerdict] = r.TimeVerdict
		if r.TimeVerdict == "" {
			cell[cTimeVerdict] = missing
		}
		var refs []string
		for _, n := range r.Why {
			k, ok := index[n]
			if !ok {
				h.notes = append(h.notes, n)
				k = len(h.notes)
				index[n] = k
			}
			refs = append(refs, strconv.Itoa(k))
		}
		if len(refs) > 0 {
			cell[cNotes] = "[" + strings.Join(refs, ",") + "]"
		}
		h.cells = append(h.cells, cell)
	}
	return h
}

func writeComparisonHuman(w io.Writer, c *Comparison, md bool) error {
	var b strings.Builder
	changed := "unchanged: suite, seed, runs, tool version and revision"
	if len(c.Changes) > 0 {
		changed = "changed: " + strings.Join(c.Changes, "; ")
	}
	if md {
		b.WriteString("**estbench compare: " + c.Headline() + "**\n\n")
		for _, l := range []string{"base " + sideLine(c.Base), "new " + sideLine(c.New), changed, c.pairingLine()} {
			b.WriteString("- " + l + "\n")
		}
		b.WriteByte('\n')
	} else {
		b.WriteString("estbench compare: " + c.Headline() + "\n")
		b.WriteString("base " + sideLine(c.Base) + "\n")
		b.WriteString("new  " + sideLine(c.New) + "\n")
		b.WriteString(changed + "\n")
		b.WriteString(c.pairingLine() + "\n\n")
	}
	if _, err := io.WriteString(w, b.String()); err != nil {
		return err
	}
	h := buildComparisonHuman(c)
	var err error
	if md {
		err = writeMarkdown(w, h)
	} else {
		err = writeTerminal(w, h)
	}
	if err != nil {
		return err
	}
	_, err = io.WriteString(w, "\n"+c.rules()+"\n")
	return err
}

func writeComparisonJSON(w io.Writer, c *Comparison) error {
	var b []byte
	b = append(b, '[')
	for i := range c.Rows {
		r := &c.Rows[i]
		if i > 0 {
			b = append(b, ',')
		}
		b = append(b, "\n  {"...)
		for j, col := range CompareColumns {
			if j > 0 {
				b = append(b, ',')
			}
			b = appendJSONString(b, col)
			b = append(b, ':')
			switch col {
			case "problem":
				b = appendJSONString(b, r.Problem)
			case "filter":
				b = appendJSONString(b, r.Filter)
			case "config":
				b = appendJSONString(b, r.Config)
			case "verdict":
				b = appendJSONString(b, r.Verdict)
			case "why":
				b = appendJSONString(b, strings.Join(r.Why, "; "))
			case "paired":
				b = strconv.AppendBool(b, c.Paired)
			case "base_runs":
				b = strconv.AppendInt(b, int64(r.BaseRuns), 10)
			case "new_runs":
				b = strconv.AppendInt(b, int64(r.NewRuns), 10)
			case "base_diverged":
				b = strconv.AppendInt(b, int64(r.BaseDiverged), 10)
			case "new_diverged":
				b = strconv.AppendInt(b, int64(r.NewDiverged), 10)
			case "base_runs_used":
				b = strconv.AppendInt(b, int64(r.BaseUsed), 10)
			case "new_runs_used":
				b = strconv.AppendInt(b, int64(r.NewUsed), 10)
			case "base_anees_mark":
				b = cmpJSONMaybe(b, r.BaseMark)
			case "new_anees_mark":
				b = cmpJSONMaybe(b, r.NewMark)
			case "time_verdict":
				b = cmpJSONMaybe(b, r.TimeVerdict)
			default:
				b = cmpJSONFloat(b, r.float(col))
			}
		}
		b = append(b, '}')
	}
	if len(c.Rows) > 0 {
		b = append(b, '\n')
	}
	b = append(b, "]\n"...)
	_, err := w.Write(b)
	return err
}

// float returns the float column col of CompareColumns.
func (r *CompareRow) float(col string) float64 {
	switch col {
	case "base_rmse":
		return r.BaseRMSE
	case "new_rmse":
		return r.NewRMSE
	case "rmse_change":
		return r.RMSEChange
	case "rmse_change_lo":
		return r.RMSEChangeLo
	case "rmse_change_hi":
		return r.RMSEChangeHi
	case "base_anees":
		return r.BaseANEES
	case "new_anees":
		return r.NewANEES
	case "anees_change":
		return r.ANEESChange
	case "anees_change_lo":
		return r.ANEESChangeLo
	case "anees_change_hi":
		return r.ANEESChangeHi
	case "base_ns_per_step":
		return r.BaseNsPerStep
	case "new_ns_per_step":
		return r.NewNsPerStep
	case "time_ratio":
		return r.TimeRatio
	}
	panic("results: no compare column " + col)
}

// cmpJSONFloat appends v as the shortest decimal that reads back to it;
// null for NaN and ±Inf.
func cmpJSONFloat(b []byte, v float64) []byte {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return append(b, "null"...)
	}
	return strconv.AppendFloat(b, v, 'g', -1, 64)
}

// cmpJSONMaybe appends s as a string, or null when it is empty.
func cmpJSONMaybe(b []byte, s string) []byte {
	if s == "" {
		return append(b, "null"...)
	}
	return appendJSONString(b, s)
}
