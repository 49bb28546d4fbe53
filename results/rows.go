package results

import (
	"math"
	"strings"
	"time"

	"github.com/estbench/estbench/metrics"
)

// SummaryColumns are the columns of the summary in CSV, JSON and Parquet, in
// order.
var SummaryColumns = []string{
	"problem", "filter", "config", "runs", "diverged",
	"rmse", "rmse_ci_lo", "rmse_ci_hi", "pred_rmse",
	"anees", "anees_bound_lo", "anees_bound_hi", "anees_run_median", "nees_in_bounds",
	"anis", "anis_bound_lo", "anis_bound_hi",
	"ns_per_step", "allocs_per_step", "evals_per_step", "mean_ess", "repairs", "note",
}

// RunColumns are the columns of runs.parquet, in order.
var RunColumns = []string{
	"problem", "filter", "config", "run", "diverged", "div_step", "reason",
	"rmse", "pred_rmse", "anees", "anis", "ns_per_step", "mean_ess", "repairs",
}

// CurveColumns are the columns of curves.parquet, in order.
var CurveColumns = []string{
	"problem", "filter", "config", "step",
	"rmse", "pred_rmse", "anees", "anees_bound_lo", "anees_bound_hi", "anis", "runs",
}

// SummaryRow is one (problem, filter configuration) pair of a suite.
type SummaryRow struct {
	Problem string // problem label
	Filter  string // filter name
	Config  string // non-default filter parameters, "" for the defaults

	// Applicable is false when the filter cannot run on the problem; then
	// Note says why, and the counts and metrics are not shown (runs 0,
	// every metric null).
	Applicable bool
	Note       string

	metrics.Summary

	AllocsPerStep float64 // heap allocations per filter step; NaN if not measured
	EvalsPerStep  float64 // model evaluations per filter step (bench.Pair.EvalsPerStep); NaN if not measured
}

// RunRow is one Monte Carlo run of a pair (a row of runs.parquet).
type RunRow struct {
	Problem, Filter, Config string
	metrics.RunStat
}

// CurveRow is one step of a pair's curves (a row of curves.parquet).
type CurveRow struct {
	Problem, Filter, Config string
	metrics.CurvePoint
}

// Provenance says where a table came from. It is printed once under the
// human tables and in summary.md; the zero value prints nothing.
type Provenance struct {
	Suite       string    // suite name
	SuiteSHA256 string    // hex sha256 of the canonical suite
	Seed        uint64    // suite seed
	Runs        int       // Monte Carlo runs per pair
	Tool        string    // tool and version, e.g. "estbench v0.2.0"
	Date        time.Time // when the suite ran; shown in UTC
}

// noteOf is the note column of a row: the reason it does not apply, then
// its warnings, joined by "; ".
func noteOf(r *SummaryRow) string {
	parts := make([]string, 0, 1+len(r.Warnings))
	if r.Note != "" {
		parts = append(parts, r.Note)
	}
	if r.Applicable {
		parts = append(parts, r.Warnings...)
	}
	return strings.Join(parts, "; ")
}

// notesOf is the list of footnote texts of a row, in order.
func notesOf(r *SummaryRow) []string {
	var n []string
	if r.Note != "" {
		n = append(n, r.Note)
	}
	if r.Applicable {
		n = append(n, r.Warnings...)
	}
	return n
}

// summaryValues returns the float64 metric columns of a row in column order
// (rmse .. repairs); all NaN when the row does not apply.
func summaryValues(r *SummaryRow) [summaryFloats]float64 {
	if !r.Applicable {
		var v [summaryFloats]float64
		for i := range v {
			v[i] = math.NaN()
		}
		return v
	}
	s := &r.Summary
	return [summaryFloats]float64{
		s.RMSE, s.RMSELo, s.RMSEHi, s.PredRMSE,
		s.ANEES, s.ANEESLo, s.ANEESHi, s.ANEESRunMedian, s.NEESInBounds,
		s.ANIS, s.ANISLo, s.ANISHi,
		s.NsPerStep, r.AllocsPerStep, r.EvalsPerStep, s.MeanESS, float64(s.Repairs),
	}
}

// summaryFloats is the number of float64 columns of the summary.
const summaryFloats = 17

// summaryCounts returns the runs and diverged columns; 0 when the row does
// not apply.
func summaryCounts(r *SummaryRow) (runs, diverged int) {
	if !r.Applicable {
		return 0, 0
	}
	return r.Runs, r.Diverged
}

// setSummaryValues is the inverse of summaryValues, used by the reader.
func setSummaryValues(r *SummaryRow, v *[summaryFloats]float64) {
	s := &r.Summary
	s.RMSE, s.RMSELo, s.RMSEHi, s.PredRMSE = v[0], v[1], v[2], v[3]
	s.ANEES, s.ANEESLo, s.ANEESHi, s.ANEESRunMedian, s.NEESInBounds = v[4], v[5], v[6], v[7], v[8]
	s.ANIS, s.ANISLo, s.ANISHi = v[9], v[10], v[11]
	s.NsPerStep, r.AllocsPerStep, r.EvalsPerStep = v[12], v[13], v[14]
	s.MeanESS = v[15]
	if !math.IsNaN(v[16]) {
		s.Repairs = int(v[16])
	}
}
