package results

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"time"
)

// Formats lists the formats of WriteSummary, for help texts.
var Formats = []string{"table", "markdown", "csv", "latex", "json"}

// WriteSummary writes the summary rows to w in one of Formats: "table" (a
// terminal table), "markdown", "latex" (booktabs), "csv" or "json". The
// human formats (table, markdown, latex) end with the numbered notes, a
// legend of the consistency marks and the provenance line; csv and json hold
// only the rows, in the columns of SummaryColumns.
func WriteSummary(w io.Writer, format string, rows []SummaryRow, prov Provenance) error {
	switch format {
	case "table":
		return writeTerminal(w, buildHuman(rows, prov))
	case "markdown":
		return writeMarkdown(w, buildHuman(rows, prov))
	case "latex":
		return writeLaTeX(w, buildHuman(rows, prov))
	case "csv":
		return writeCSV(w, rows)
	case "json":
		return writeJSON(w, rows)
	}
	return fmt.Errorf("results: unknown format %q (valid: %s)", format, strings.Join(Formats, ", "))
}

// WriteSummaryFile writes the summary in the given format to path,
// atomically.
func WriteSummaryFile(path, format string, rows []SummaryRow, prov Provenance) error {
	if !validFormat(format) {
		return WriteSummary(io.Discard, format, rows, prov)
	}
	return WriteFileAtomic(path, func(w io.Writer) error {
		return WriteSummary(w, format, rows, prov)
	})
}

// WriteSummaryMD writes summary.md to path, atomically: a heading naming
// the suite, the markdown table with its notes, and the provenance.
func WriteSummaryMD(path string, rows []SummaryRow, prov Provenance) error {
	return WriteFileAtomic(path, func(w io.Writer) error {
		return writeSummaryMD(w, rows, prov)
	})
}

func writeSummaryMD(w io.Writer, rows []SummaryRow, prov Provenance) error {
	title := "# estbench results"
	if prov.Suite != "" {
		title += ": " + prov.Suite
	}
	if _, err := io.WriteString(w, title+"\n\n"); err != nil {
		return err
	}
	return writeMarkdown(w, buildHuman(rows, prov))
}

func validFormat(f string) bool {
	for _, v := range Formats {
		if v == f {
			return true
		}
	}
	return false
}

// human is a summary laid out for people, shared by the table, markdown and
// latex writers: each writer only adds its own syntax and escaping.
type human struct {
	head   []string
	right  []bool // right-aligned column
	cells  [][]string
	notes  []string // footnote texts; note i is cited as [i+1]
	legend bool     // some row has metrics, so the legend is shown
	prov   string   // provenance line; "" if none
}

// Column indices of the human layout.
const (
	hProblem = iota
	hFilter
	hConfig
	hRuns
	hDiverged
	hRMSE
	hPred
	hANEES
	hANEESMed
	hNEESIn
	hANIS
	hTime
	hAllocs
	hEvals
	hESS
	hNotes
	hColumns
)

// missing is shown where a value does not exist.
const missing = "-"

func buildHuman(rows []SummaryRow, prov Provenance) *human {
	var rmse, pred, anees, anis, ns, inb, allocs, evals, ess []float64
	for i := range rows {
		r := &rows[i]
		if !r.Applicable {
			continue
		}
		rmse = append(rmse, r.RMSE, r.RMSELo, r.RMSEHi)
		if !math.IsNaN(r.PredRMSE) {
			pred = append(pred, r.PredRMSE)
		}
		// The consistency columns take their scale from the bounds, which
		// sit near the dimension; an ANEES far outside them (a collapsed
		// particle cloud) is shown on its own in e-notation by format. The
		// median run ANEES shares the ANEES scale.
		anees = append(anees, r.ANEESLo, r.ANEESHi)
		anis = append(anis, r.ANISLo, r.ANISHi)
		ns = append(ns, r.NsPerStep)
		inb = append(inb, 100*r.NEESInBounds)
		allocs = append(allocs, r.AllocsPerStep)
		if !math.IsNaN(r.EvalsPerStep) {
			evals = append(evals, r.EvalsPerStep)
		}
		if !math.IsNaN(r.MeanESS) {
			ess = append(ess, r.MeanESS)
		}
	}
	scESS := scale{div: 1, decimals: decimalsFor(minNonzero(ess))}
	scRMSE := magnitudeScale(rmse)
	scPred := magnitudeScale(pred)
	scANEES := magnitudeScale(anees)
	scANIS := magnitudeScale(anis)
	scTime := timeScale(ns)
	scIn := scale{div: 1, decimals: decimalsFor(minNonzero(inb))}
	scAllocs := scale{div: 1, decimals: 0}
	if !allIntegers(allocs) {
		scAllocs.decimals = decimalsFor(minNonzero(allocs))
	}
	scEvals := scale{div: 1, decimals: 0}
	if !allIntegers(evals) {
		scEvals.decimals = decimalsFor(minNonzero(evals))
	}

	h := &human{
		head: []string{
			"problem", "filter", "config", "runs", "diverged",
			withFactor("RMSE", scRMSE) + " [95% CI]",
			withFactor("pred RMSE", scPred),
			withFactor("ANEES", scANEES) + " [95% bounds]",
			withFactor("median run ANEES", scANEES),
			"NEES in (%)",
			withFactor("ANIS", scANIS) + " [95% bounds]",
			scTime.label + "/step",
			"allocs/step",
			"evals/step",
			"mean ESS",
			"notes",
		},
		right: []bool{false, false, false, true, true, true, true, true, true, true, true, true, true, true, true, false},
		prov:  provenanceLine(prov),
	}
	index := map[string]int{} // note text -> footnote number
	for i := range rows {
		r := &rows[i]
		c := make([]string, hColumns)
		c[hProblem], c[hFilter], c[hConfig] = r.Problem, r.Filter, r.Config
		if c[hConfig] == "" {
			c[hConfig] = "default"
		}
		for j := hRuns; j < hNotes; j++ {
			c[j] = missing
		}
		if r.Applicable {
			c[hRuns] = strconv.Itoa(r.Runs)
			c[hDiverged] = strconv.Itoa(r.Diverged)
			c[hRMSE] = withInterval(scRMSE, r.RMSE, r.RMSELo, r.RMSEHi)
			c[hPred] = scPred.format(r.PredRMSE)
			c[hANEES] = withBounds(scANEES, r.ANEES, r.ANEESLo, r.ANEESHi)
			c[hANEESMed] = scANEES.format(r.ANEESRunMedian)
			c[hNEESIn] = scIn.format(100 * r.NEESInBounds)
			c[hANIS] = withBounds(scANIS, r.ANIS, r.ANISLo, r.ANISHi)
			h.legend = true
			c[hTime] = scTime.format(r.NsPerStep)
			c[hAllocs] = scAllocs.format(r.AllocsPerStep)
			c[hEvals] = scEvals.format(r.EvalsPerStep)
			c[hESS] = scESS.format(r.MeanESS)
		}
		var refs []string
		for _, n := range notesOf(r) {
			k, ok := index[n]
			if !ok {
				h.notes = append(h.notes, n)
				k = len(h.notes)
				index[n] = k
			}
			refs = append(refs, strconv.Itoa(k))
		}
		if len(refs) > 0 {
			c[hNotes] = "[" + strings.Join(refs, ",") + "]"
		}
		h.cells = append(h.cells, c)
	}
	if len(ess) == 0 {
		h.drop(hESS) // no particle or ensemble filter in the table
	}
	if len(evals) == 0 {
		h.drop(hEvals) // no row has a count of model evaluations
	}
	if len(pred) == 0 {
		h.drop(hPred) // no filter in the table reports its innovation
	}
	return h
}

// drop removes column i from the layout.
func (h *human) drop(i int) {
	h.head = append(h.head[:i:i], h.head[i+1:]...)
	h.right = append(h.right[:i:i], h.right[i+1:]...)
	for k, c := range h.cells {
		h.cells[k] = append(c[:i:i], c[i+1:]...)
	}
}

// legend explains the consistency columns.
const legend = "in/high/low: ANEES or ANIS inside, above or below its two-sided 95% chi-square bounds " +
	"(high: the filter's covariance is too small, overconfident; low: too large, pessimistic). " +
	"NEES in: percent of steps whose run-averaged NEES is inside its own 95% bounds (near 95 when consistent). " +
	"median run ANEES: the median over runs of each run's ANEES, which a few runs whose NEES explodes cannot move " +
	"(near the state dimension, slightly below it, when consistent)."

func provenanceLine(p Provenance) string {
	if p == (Provenance{}) {
		return ""
	}
	var parts []string
	if p.Suite != "" {
		parts = append(parts, "suite "+p.Suite)
	}
	parts = append(parts, "seed "+strconv.FormatUint(p.Seed, 10))
	parts = append(parts, strconv.Itoa(p.Runs)+" runs")
	if p.Tool != "" {
		parts = append(parts, p.Tool)
	}
	if p.SuiteSHA256 != "" {
		parts = append(parts, "suite sha256 "+p.SuiteSHA256)
	}
	if !p.Date.IsZero() {
		parts = append(parts, p.Date.UTC().Format(time.RFC3339))
	}
	return strings.Join(parts, ", ")
}

// scale is how one column of numbers is shown to people: v/div with a fixed
// number of decimals.
type scale struct {
	div      float64
	decimals int
	label    string // factor ("×1e-6") or unit ("µs"); "" for none
	expo     bool   // e-notation with decimals digits after the point
}

func (s scale) format(v float64) string {
	if math.IsNaN(v) {
		return missing
	}
	if math.IsInf(v, 0) {
		if v > 0 {
			return "inf"
		}
		return "-inf"
	}
	if s.expo {
		return strconv.FormatFloat(v, 'e', s.decimals, 64)
	}
	if math.Abs(v/s.div) >= tooWide {
		return strconv.FormatFloat(v/s.div, 'e', 2, 64)
	}
	return strconv.FormatFloat(v/s.div, 'f', s.decimals, 64)
}

// tooWide is the scaled magnitude from which a single value of a fixed
// column is shown in e-notation rather than as a long run of digits.
const tooWide = 1e6

// maxDecimals bounds the decimals of a column.
const maxDecimals = 6

// wideRange is the ratio of largest to smallest nonzero magnitude from which
// a column is shown in e-notation.
const wideRange = 1e4

// magnitudeScale picks how to show a column of plain numbers. When its
// nonzero magnitudes span a factor of wideRange or more, fixed decimals
// would need more than seven digits for the largest value, so the column is
// in e-notation with three significant digits (1.23e-04). Otherwise it
// takes a power-of-ten factor (a multiple of 3, shown in the header) when
// its largest magnitude is 1e5 or more or below 1e-3, and the decimals that
// keep three significant digits of its smallest nonzero magnitude.
func magnitudeScale(vals []float64) scale {
	sc := scale{div: 1}
	if lo := minNonzero(vals); lo > 0 && maxAbs(vals)/lo >= wideRange {
		return scale{div: 1, decimals: 2, expo: true}
	}
	if mx := maxAbs(vals); mx > 0 && (mx >= 1e5 || mx < 1e-3) {
		e := 3 * int(math.Floor(math.Floor(math.Log10(mx))/3))
		sc.div = math.Pow(10, float64(e))
		sc.label = "×1e" + strconv.Itoa(e)
	}
	sc.decimals = decimalsFor(minNonzero(vals) / sc.div)
	return sc
}

// timeScale picks the largest of ns, µs, ms, s in which the column's
// smallest nonzero time is at least 1.
func timeScale(ns []float64) scale {
	m := minNonzero(ns)
	sc := scale{div: 1, label: "ns"}
	for _, u := range []scale{{div: 1e3, label: "µs"}, {div: 1e6, label: "ms"}, {div: 1e9, label: "s"}} {
		if m >= u.div {
			sc = u
		}
	}
	sc.decimals = decimalsFor(m / sc.div)
	return sc
}

// decimalsFor returns the decimals that show m with three significant
// digits, within [0, maxDecimals]; 0 for m == 0.
func decimalsFor(m float64) int {
	if m == 0 || math.IsNaN(m) || math.IsInf(m, 0) {
		return 0
	}
	d := 2 - int(math.Floor(math.Log10(m)))
	return min(max(d, 0), maxDecimals)
}

func withFactor(name string, s scale) string {
	if s.label == "" {
		return name
	}
	return name + " " + s.label
}

// withInterval shows "v [lo, hi]", or v alone when the interval is missing.
func withInterval(s scale, v, lo, hi float64) string {
	if math.IsNaN(v) {
		return missing
	}
	out := s.format(v)
	if !math.IsNaN(lo) && !math.IsNaN(hi) {
		out += " [" + s.format(lo) + ", " + s.format(hi) + "]"
	}
	return out
}

// withBounds shows "v [lo, hi] mark" with mark in, high or low.
func withBounds(s scale, v, lo, hi float64) string {
	out := withInterval(s, v, lo, hi)
	if math.IsNaN(v) || math.IsNaN(lo) || math.IsNaN(hi) {
		return out
	}
	switch {
	case v > hi:
		return out + " high"
	case v < lo:
		return out + " low"
	}
	return out + " in"
}

func maxAbs(vals []float64) float64 {
	m := 0.0
	for _, v := range vals {
		if a := math.Abs(v); !math.IsInf(a, 0) && a > m {
			m = a
		}
	}
	return m
}

// minNonzero is the smallest finite nonzero magnitude, 0 if none.
func minNonzero(vals []float64) float64 {
	m := 0.0
	for _, v := range vals {
		a := math.Abs(v)
		if a == 0 || math.IsNaN(a) || math.IsInf(a, 0) {
			continue
		}
		if m == 0 || a < m {
			m = a
		}
	}
	return m
}

func allIntegers(vals []float64) bool {
	for _, v := range vals {
		if !math.IsNaN(v) && !math.IsInf(v, 0) && v != math.Trunc(v) {
			return false
		}
	}
	return true
}

// noteRef is how note i (0-based) is cited under a table.
func noteRef(i int) string { return "[" + strconv.Itoa(i+1) + "]" }
