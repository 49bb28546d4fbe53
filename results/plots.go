package results

import (
	"bytes"
	"fmt"
	"image/color"
	"io"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"

	"github.com/estbench/estbench/metrics"
)

// Figure is one plot of a report, drawn once and kept as a standalone SVG
// document and a PNG image.
type Figure struct {
	Name    string // file stem, unique in a report: "<problem>-rmse", "<problem>-nees", "<problem>-cost"
	Problem string // problem label
	Kind    string // "rmse", "nees" or "cost"
	Title   string // drawn above the plot
	Caption string // how to read the plot, shown under it in the HTML report
	SVG     []byte // standalone SVG document
	PNG     []byte // the same plot at pngDPI
}

// Figure kinds.
const (
	FigureRMSE = "rmse" // RMSE over time, one line per configuration
	FigureNEES = "nees" // average NEES over time with its chi-square band
	FigureCost = "cost" // RMSE against time per step, with the accuracy/cost front
)

// Plot geometry. The plot part has a fixed size; the legend to its right
// is as wide as the longest label of the problem needs.
const (
	plotWidth  = 4.7 * vg.Inch
	plotHeight = 3.4 * vg.Inch
	pngDPI     = 144
)

// logSpan is the ratio of largest to smallest plotted value from which an
// axis is logarithmic: past two decades a linear axis flattens everything
// but the largest values into the bottom row of pixels (common practice,
// no source).
const logSpan = 100

// seriesColours are the colours of the configurations, in order of first
// appearance in the summary: the colour-blind-safe set of Okabe & Ito
// (2008), "Color Universal Design (CUD): how to make figures and
// presentations that are friendly to colorblind people", without its
// yellow, which is too pale on white. Past seven configurations the
// colours repeat with dashed lines.
var seriesColours = [...]color.RGBA{
	{0x00, 0x72, 0xB2, 0xff}, // blue
	{0xD5, 0x5E, 0x00, 0xff}, // vermillion
	{0x00, 0x9E, 0x73, 0xff}, // bluish green
	{0xCC, 0x79, 0xA7, 0xff}, // reddish purple
	{0xE6, 0x9F, 0x00, 0xff}, // orange
	{0x56, 0xB4, 0xE9, 0xff}, // sky blue
	{0x00, 0x00, 0x00, 0xff}, // black
}

// seriesDashes are the dash patterns of the second, third, ... round of
// colours.
var seriesDashes = [][]vg.Length{nil, {vg.Points(6), vg.Points(3)}, {vg.Points(2), vg.Points(2)}, {vg.Points(8), vg.Points(3), vg.Points(2), vg.Points(3)}}

var (
	bandColour  = color.NRGBA{0x80, 0x80, 0x80, 0x4c} // chi-square band, translucent
	frontColour = color.RGBA{0x33, 0x33, 0x33, 0xff}  // accuracy/cost front
	gridColour  = color.RGBA{0xe4, 0xe4, 0xe4, 0xff}
)

// sans is the typeface of every text in the plots. Liberation Sans ships
// with gonum/plot (so PNGs need no system fonts) and has the metrics of
// Arial and Helvetica, which the SVGs name as fallbacks.
var sans = font.Font{Typeface: "Liberation", Variant: "Sans"}

// configLabel is how a configuration is named in plots and summaries:
// the filter, then its non-default parameters.
func configLabel(filter, config string) string {
	if config == "" {
		return filter
	}
	return filter + " " + config
}

func configKey(filter, config string) string { return filter + "\x00" + config }

// problemView is one problem of a report: its rows in summary order and the
// curves of each configuration, in step order.
type problemView struct {
	label  string
	slug   string
	rows   []int                           // indices into the summary rows
	curves map[string][]metrics.CurvePoint // by configKey
}

// groupProblems splits the rows and curves by problem, in order of first
// appearance in the summary; problems that only appear in the curves come
// last. Slugs are made unique.
func groupProblems(rows []SummaryRow, curves []CurveRow) []*problemView {
	var views []*problemView
	byLabel := map[string]*problemView{}
	get := func(label string) *problemView {
		if v, ok := byLabel[label]; ok {
			return v
		}
		v := &problemView{label: label, curves: map[string][]metrics.CurvePoint{}}
		byLabel[label] = v
		views = append(views, v)
		return v
	}
	for i := range rows {
		v := get(rows[i].Problem)
		v.rows = append(v.rows, i)
	}
	for i := range curves {
		c := &curves[i]
		v := get(c.Problem)
		k := configKey(c.Filter, c.Config)
		v.curves[k] = append(v.curves[k], c.CurvePoint)
	}
	used := map[string]bool{}
	for _, v := range views {
		for _, pts := range v.curves {
			sort.SliceStable(pts, func(a, b int) bool { return pts[a].Step < pts[b].Step })
		}
		s := slugOf(v.label)
		for n := 2; used[s]; n++ {
			s = slugOf(v.label) + "-" + strconv.Itoa(n)
		}
		used[s] = true
		v.slug = s
	}
	return views
}

// slugOf turns a problem label ("ctrb(steps=150)") into a file and anchor
// name ("ctrb-steps-150"): ASCII letters, digits, '.', '_' and single '-'.
func slugOf(label string) string {
	var b strings.Builder
	dash := false
	for _, r := range label {
		ok := r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || r == '.' || r == '_'
		if ok {
			b.WriteRune(r)
			dash = false
		} else if !dash && b.Len() > 0 {
			b.WriteByte('-')
			dash = true
		}
	}
	s := strings.TrimRight(b.String(), "-")
	if s == "" {
		s = "problem"
	}
	return s
}

// seriesStyle is the look of one configuration in every plot.
type seriesStyle struct {
	colour color.RGBA
	dashes []vg.Length
}

// styleIndex numbers the configurations (filter + config) in order of first
// appearance among the applicable rows, so a configuration has the same
// colour on every problem.
func styleIndex(rows []SummaryRow) map[string]int {
	idx := map[string]int{}
	for i := range rows {
		r := &rows[i]
		k := configKey(r.Filter, r.Config)
		if _, ok := idx[k]; !ok && r.Applicable {
			idx[k] = len(idx)
		}
	}
	for i := range rows { // then the others, for curves without a summary row
		k := configKey(rows[i].Filter, rows[i].Config)
		if _, ok := idx[k]; !ok {
			idx[k] = len(idx)
		}
	}
	return idx
}

func styleOf(i int) seriesStyle {
	n := len(seriesColours)
	return seriesStyle{colour: seriesColours[i%n], dashes: seriesDashes[(i/n)%len(seriesDashes)]}
}

// figureMaker draws the figures of one report.
type figureMaker struct {
	rows   []SummaryRow
	styles map[string]int
}

// ReportFigures draws the figures of a report: for every problem with
// curves, RMSE over time and average NEES over time with its chi-square
// band; for every problem with at least one configuration that has both
// RMSE and time per step, the accuracy/cost scatter with its front. Figures
// come in problem order, each problem's in that order.
func ReportFigures(d *ReportData) ([]Figure, error) {
	fm := &figureMaker{rows: d.Rows, styles: styleIndex(d.Rows)}
	var figs []Figure
	for _, v := range groupProblems(d.Rows, d.Curves) {
		keys := fm.curveKeys(v)
		legW := fm.legendWidth(v, keys)
		if len(keys) > 0 {
			f, err := fm.rmseFigure(v, keys, legW)
			if err != nil {
				return nil, err
			}
			figs = append(figs, f)
			f, err = fm.neesFigure(v, keys, legW)
			if err != nil {
				return nil, err
			}
			figs = append(figs, f)
		}
		f, ok, err := fm.costFigure(v, legW)
		if err != nil {
			return nil, err
		}
		if ok {
			figs = append(figs, f)
		}
	}
	return figs, nil
}

// curveKeys are the configurations of a problem that have curves: those of
// its summary rows first, in row order, then any others in key order.
func (fm *figureMaker) curveKeys(v *problemView) []string {
	var keys []string
	seen := map[string]bool{}
	for _, i := range v.rows {
		k := configKey(fm.rows[i].Filter, fm.rows[i].Config)
		if _, ok := v.curves[k]; ok && !seen[k] {
			keys = append(keys, k)
			seen[k] = true
		}
	}
	var rest []string
	for k := range v.curves {
		if !seen[k] {
			rest = append(rest, k)
		}
	}
	sort.Strings(rest)
	return append(keys, rest...)
}

func (fm *figureMaker) style(k string) seriesStyle {
	i, ok := fm.styles[k]
	if !ok {
		i = len(fm.styles)
		fm.styles[k] = i
	}
	return styleOf(i)
}

func keyLabel(k string) string {
	f, c, _ := strings.Cut(k, "\x00")
	return configLabel(f, c)
}

// Text sizes, in points.
const (
	titleSize  = 12.5
	labelSize  = 11
	tickSize   = 9.5
	legendSize = 10
)

func textStyle(size vg.Length) text.Style {
	return text.Style{Color: color.Black, Font: font.From(sans, size), Handler: plot.DefaultTextHandler}
}

// legendWidth is the width of the legend column of a problem's figures:
// the longest label among its configurations and the extra entries.
func (fm *figureMaker) legendWidth(v *problemView, keys []string) vg.Length {
	sty := textStyle(legendSize)
	labels := []string{"95% chi-square band", "accuracy/cost front"}
	for _, k := range keys {
		labels = append(labels, keyLabel(k))
	}
	for _, i := range v.rows {
		labels = append(labels, configLabel(fm.rows[i].Filter, fm.rows[i].Config))
	}
	w := vg.Length(0)
	for _, l := range labels {
		w = max(w, sty.Width(l))
	}
	// A viewer without Liberation Sans or Arial draws the SVG text in a
	// wider font (DejaVu Sans is about a tenth wider): leave room for it.
	return 1.15*w + vg.Points(20) + sty.Width(" ") + vg.Points(14)
}

// newPlot is a plot in the report's look: sans-serif text, a light grid,
// no legend inside the data area.
func newPlot(title, xLabel, yLabel string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.Title.TextStyle = textStyle(titleSize)
	p.Title.TextStyle.XAlign, p.Title.TextStyle.YAlign = draw.XCenter, draw.YTop
	p.Title.Padding = vg.Points(8)
	for _, ax := range []*plot.Axis{&p.X, &p.Y} {
		ax.Label.TextStyle = textStyle(labelSize)
		ax.Label.TextStyle.XAlign, ax.Label.TextStyle.YAlign = draw.XCenter, draw.YBottom
		ax.Tick.Label = textStyle(tickSize)
		ax.Tick.Label.XAlign, ax.Tick.Label.YAlign = draw.XCenter, draw.YTop
		ax.Padding = vg.Points(3)
	}
	p.Y.Tick.Label.XAlign, p.Y.Tick.Label.YAlign = draw.XRight, draw.YCenter
	p.X.Label.Text, p.Y.Label.Text = xLabel, yLabel
	g := plotter.NewGrid()
	g.Vertical.Color, g.Horizontal.Color = gridColour, gridColour
	g.Vertical.Width, g.Horizontal.Width = vg.Points(0.5), vg.Points(0.5)
	p.Add(g)
	return p
}

// axisChoice is how the y (or x) axis of a plot is scaled.
type axisChoice struct {
	log    bool
	lo, hi float64 // range of the positive finite values (log) or of all finite values
}

// chooseAxis looks at the values to be plotted: logarithmic when the
// positive values span logSpan or more (and there are no non-positive
// values that matter), linear otherwise.
func chooseAxis(vals []float64) axisChoice {
	lo, hi := math.Inf(1), math.Inf(-1)
	plo := math.Inf(1)
	for _, v := range vals {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			continue
		}
		lo, hi = math.Min(lo, v), math.Max(hi, v)
		if v > 0 {
			plo = math.Min(plo, v)
		}
	}
	if math.IsInf(lo, 1) {
		return axisChoice{lo: 0, hi: 1}
	}
	if lo > 0 && hi/plo >= logSpan {
		return axisChoice{log: true, lo: plo, hi: hi}
	}
	return axisChoice{lo: lo, hi: hi}
}

// decades is the span of a log axis in powers of ten.
func (a axisChoice) decades() float64 { return math.Log10(a.hi / a.lo) }

// tr maps a value to the axis's coordinate: its base-10 logarithm on a log
// axis, itself on a linear one. A log axis is drawn as a linear axis of
// logarithms with ticks at the logarithms of round numbers (gonum/plot's
// own LogScale places the axis label's glyph box at the arithmetic middle
// of the range, which squeezes the plot when the range spans decades).
func (a axisChoice) tr(v float64) float64 {
	if a.log {
		return math.Log10(v)
	}
	return v
}

// drawable says whether v can be placed on the axis.
func (a axisChoice) drawable(v float64) bool {
	return plotFinite(v) && (!a.log || v > 0)
}

// apply sets the ticks and range of an axis. A linear axis starts at zero
// when zero is true and the values are non-negative.
func (a axisChoice) apply(ax *plot.Axis, zero bool, format func(m, e int) string) {
	if a.log {
		ax.Tick.Marker = logTicker{format: format}
		pad := 0.04 * math.Log10(a.hi/a.lo)
		ax.Min, ax.Max = math.Log10(a.lo)-pad, math.Log10(a.hi)+pad
		return
	}
	lo, hi := a.lo, a.hi
	if hi <= lo { // one value: a tenth of it either side
		d := math.Abs(lo) / 10
		if d == 0 {
			d = 1
		}
		lo, hi = lo-d, hi+d
	}
	pad := 0.05 * (hi - lo)
	if zero && a.lo >= 0 {
		ax.Min, ax.Max = 0, hi+pad
		return
	}
	ax.Min, ax.Max = lo-pad, hi+pad
}

// logTicker is the ticker of a log axis (whose coordinates are base-10
// logarithms): labelled ticks at 1, 2, 5 (or 1, 2, 3, 5, 7) times powers
// of ten when the axis spans few decades, at powers of ten otherwise, and
// unlabelled minor ticks in between.
type logTicker struct {
	format func(m, e int) string // label of m·10^e; nil for plain numbers
}

func (t logTicker) Ticks(min, max float64) []plot.Tick {
	ticks := t.valueTicks(math.Pow(10, min), math.Pow(10, max))
	for i := range ticks {
		ticks[i].Value = math.Log10(ticks[i].Value)
	}
	return ticks
}

// valueTicks are the ticks between lo and hi, at their values.
func (t logTicker) valueTicks(lo, hi float64) []plot.Tick {
	if !(lo > 0) || !(hi > lo) || math.IsInf(hi, 0) {
		return nil
	}
	format := t.format
	if format == nil {
		format = numberLabel
	}
	span := math.Log10(hi / lo)
	labelled := []int{1}
	switch {
	case span <= 1:
		labelled = []int{1, 2, 3, 5, 7}
	case span <= 2.5:
		labelled = []int{1, 2, 5}
	}
	every := max(1, int(math.Ceil(span/8))) // label every n-th decade on very long axes
	var ticks []plot.Tick
	nLabels := 0
	for e := int(math.Floor(math.Log10(lo))); e <= int(math.Ceil(math.Log10(hi))); e++ {
		for m := 1; m <= 9; m++ {
			if span > 8 && m > 1 {
				break
			}
			v := mantissaValue(m, e)
			if v < lo || v > hi {
				continue
			}
			tk := plot.Tick{Value: v}
			if hasInt(labelled, m) && (m > 1 || plotMod(e, every) == 0) {
				tk.Label = format(m, e)
				nLabels++
			}
			ticks = append(ticks, tk)
		}
	}
	if nLabels < 2 { // a narrow range: round numbers of a linear axis
		ticks = plot.DefaultTicks{}.Ticks(lo, hi)
		for i := range ticks {
			if ticks[i].Value <= 0 {
				ticks[i].Label = ""
			}
		}
	}
	return ticks
}

func plotMod(a, b int) int { return ((a % b) + b) % b }

func hasInt(s []int, v int) bool {
	for _, x := range s {
		if x == v {
			return true
		}
	}
	return false
}

// mantissaValue is the float64 nearest to m·10^e.
func mantissaValue(m, e int) float64 {
	v, _ := strconv.ParseFloat(strconv.Itoa(m)+"e"+strconv.Itoa(e), 64)
	return v
}

// numberLabel writes m·10^e as a plain number from 0.001 to 9000 and as
// "5e7" outside.
func numberLabel(m, e int) string {
	if e >= -3 && e <= 3 {
		return strconv.FormatFloat(mantissaValue(m, e), 'f', -1, 64)
	}
	return strconv.Itoa(m) + "e" + strconv.Itoa(e)
}

// timeLabel writes m·10^e nanoseconds in ns, µs, ms or s.
func timeLabel(m, e int) string {
	units := []string{"ns", "µs", "ms", "s"}
	u := min(max(e, 0)/3, len(units)-1)
	return strconv.FormatFloat(mantissaValue(m, e-3*u), 'f', -1, 64) + " " + units[u]
}

// curveSegments splits a curve at the points where it cannot be drawn (NaN,
// infinite, or not positive on a log axis) into drawable pieces, in axis
// coordinates.
func curveSegments(xs, ys []float64, ya axisChoice) []plotter.XYs {
	var out []plotter.XYs
	var cur plotter.XYs
	for i := range xs {
		y := ys[i]
		if !ya.drawable(y) {
			if len(cur) > 0 {
				out = append(out, cur)
				cur = nil
			}
			continue
		}
		cur = append(cur, plotter.XY{X: xs[i], Y: ya.tr(y)})
	}
	if len(cur) > 0 {
		out = append(out, cur)
	}
	return out
}

// addCurve draws one configuration's curve as lines (a lone point between
// gaps as a dot) and returns the legend thumbnail.
func addCurve(p *plot.Plot, xs, ys []float64, ya axisChoice, st seriesStyle) plot.Thumbnailer {
	ls := draw.LineStyle{Color: st.colour, Width: vg.Points(1.4), Dashes: st.dashes}
	thumb := &plotter.Line{LineStyle: ls}
	for _, seg := range curveSegments(xs, ys, ya) {
		if len(seg) == 1 {
			s := &plotter.Scatter{XYs: seg, GlyphStyle: draw.GlyphStyle{Color: st.colour, Radius: vg.Points(1.6), Shape: draw.CircleGlyph{}}}
			p.Add(s)
			continue
		}
		p.Add(&plotter.Line{XYs: seg, LineStyle: ls})
	}
	return thumb
}

// stepRange is the range of steps over the curves of keys.
func stepRange(v *problemView, keys []string) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, k := range keys {
		for _, c := range v.curves[k] {
			lo, hi = math.Min(lo, float64(c.Step)), math.Max(hi, float64(c.Step))
		}
	}
	if math.IsInf(lo, 0) {
		return 0, 1
	}
	if hi <= lo {
		hi = lo + 1
	}
	return lo, hi
}

type legendItem struct {
	label  string
	thumbs []plot.Thumbnailer
}

func (fm *figureMaker) rmseFigure(v *problemView, keys []string, legW vg.Length) (Figure, error) {
	p := newPlot(v.label+": RMSE over time", "step", "RMSE")
	var all []float64
	for _, k := range keys {
		for _, c := range v.curves[k] {
			all = append(all, c.RMSE)
		}
	}
	ax := chooseAxis(all)
	ax.apply(&p.Y, true, nil)
	p.X.Min, p.X.Max = stepRange(v, keys)
	var items []legendItem
	for _, k := range keys {
		xs, ys := curveXY(v.curves[k], func(c metrics.CurvePoint) float64 { return c.RMSE })
		items = append(items, legendItem{keyLabel(k), []plot.Thumbnailer{addCurve(p, xs, ys, ax, fm.style(k))}})
	}
	caption := "RMSE over the runs at each step (the problem's scored components), one line per configuration. " +
		axisSentence(ax, "")
	return renderFigure(v, FigureRMSE, p, items, legW, caption)
}

func curveXY(pts []metrics.CurvePoint, y func(metrics.CurvePoint) float64) (xs, ys []float64) {
	xs, ys = make([]float64, len(pts)), make([]float64, len(pts))
	for i, c := range pts {
		xs[i], ys[i] = float64(c.Step), y(c)
	}
	return xs, ys
}

// axisSentence says how the y-axis is scaled and why.
func axisSentence(ax axisChoice, why string) string {
	if ax.log {
		return fmt.Sprintf("Logarithmic y-axis: the values span %.1f decades%s.", ax.decades(), why)
	}
	return "Linear y-axis."
}

// neesBand is the chi-square band of a problem's NEES plot: at each step
// the bounds of the configuration with the most contributing runs there.
func neesBand(v *problemView, keys []string) (steps, lo, hi []float64) {
	type best struct {
		runs   int
		lo, hi float64
	}
	at := map[int]best{}
	for _, k := range keys {
		for _, c := range v.curves[k] {
			b, ok := at[c.Step]
			if math.IsNaN(c.ANEESLo) || math.IsNaN(c.ANEESHi) {
				continue
			}
			if !ok || c.Runs > b.runs {
				at[c.Step] = best{c.Runs, c.ANEESLo, c.ANEESHi}
			}
		}
	}
	var ks []int
	for k := range at {
		ks = append(ks, k)
	}
	sort.Ints(ks)
	for _, k := range ks {
		steps = append(steps, float64(k))
		lo = append(lo, at[k].lo)
		hi = append(hi, at[k].hi)
	}
	return steps, lo, hi
}

// bandPolygons are the closed shapes between lo and hi, split where the
// band is not defined or not positive on a log axis.
func bandPolygons(xs, lo, hi []float64, ya axisChoice) []plotter.XYs {
	var out []plotter.XYs
	start := -1
	flush := func(end int) {
		if start >= 0 && end-start >= 2 {
			var ring plotter.XYs
			for i := start; i < end; i++ {
				ring = append(ring, plotter.XY{X: xs[i], Y: ya.tr(lo[i])})
			}
			for i := end - 1; i >= start; i-- {
				ring = append(ring, plotter.XY{X: xs[i], Y: ya.tr(hi[i])})
			}
			out = append(out, ring)
		}
		start = -1
	}
	for i := range xs {
		ok := ya.drawable(lo[i]) && ya.drawable(hi[i])
		if !ok {
			flush(i)
			continue
		}
		if start < 0 {
			start = i
		}
	}
	flush(len(xs))
	return out
}

func (fm *figureMaker) neesFigure(v *problemView, keys []string, legW vg.Length) (Figure, error) {
	p := newPlot(v.label+": average NEES over time", "step", "average NEES")
	bs, blo, bhi := neesBand(v, keys)
	all := append(append([]float64{}, blo...), bhi...)
	for _, k := range keys {
		for _, c := range v.curves[k] {
			all = append(all, c.ANEES)
		}
	}
	ax := chooseAxis(all)
	ax.apply(&p.Y, true, nil)
	p.X.Min, p.X.Max = stepRange(v, keys)
	band := &plotter.Polygon{Color: bandColour}
	for _, ring := range bandPolygons(bs, blo, bhi, ax) {
		p.Add(&plotter.Polygon{XYs: []plotter.XYs{ring}, Color: bandColour})
	}
	items := []legendItem{{"95% chi-square band", []plot.Thumbnailer{band}}}
	for _, k := range keys {
		xs, ys := curveXY(v.curves[k], func(c metrics.CurvePoint) float64 { return c.ANEES })
		items = append(items, legendItem{keyLabel(k), []plot.Thumbnailer{addCurve(p, xs, ys, ax, fm.style(k))}})
	}
	why := ""
	if ax.log {
		why = " (an overconfident filter, such as a particle filter whose cloud has collapsed, has NEES far above the band)"
	}
	caption := "Average NEES over the runs at each step, one line per configuration. " +
		"Shaded: the two-sided 95% chi-square band of that average (Bar-Shalom, Li & Kirubarajan 2001, §5.4.2), " +
		"for the configuration with the most runs at each step (one with diverged runs has a slightly wider band of its own). " +
		"Above the band the filter's covariance is too small (overconfident), below it too large. " +
		axisSentence(ax, why)
	return renderFigure(v, FigureNEES, p, items, legW, caption)
}

// costPoint is one configuration on the accuracy/cost plane.
type costPoint struct {
	key            string
	ns, rmse       float64
	rmseLo, rmseHi float64
}

// costPoints are the applicable rows of a problem with a finite RMSE and a
// positive time per step.
func (fm *figureMaker) costPoints(v *problemView) []costPoint {
	var pts []costPoint
	for _, i := range v.rows {
		r := &fm.rows[i]
		if !r.Applicable || !plotFinite(r.RMSE) || !plotFinite(r.NsPerStep) || r.NsPerStep <= 0 {
			continue
		}
		pts = append(pts, costPoint{configKey(r.Filter, r.Config), r.NsPerStep, r.RMSE, r.RMSELo, r.RMSEHi})
	}
	return pts
}

func plotFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// paretoFront marks the points that no other point dominates, where a
// dominates b when a costs no more and errs no more, and is strictly better
// in one of the two (the usual definition of Pareto dominance, e.g. Deb
// 2001, "Multi-Objective Optimization using Evolutionary Algorithms",
// Definition 2.5). Equal points are all on the front.
func paretoFront(cost, err []float64) []bool {
	on := make([]bool, len(cost))
	for i := range cost {
		on[i] = true
		for j := range cost {
			if j != i && cost[j] <= cost[i] && err[j] <= err[i] && (cost[j] < cost[i] || err[j] < err[i]) {
				on[i] = false
				break
			}
		}
	}
	return on
}

// frontRows are the rows (indices into fm.rows) of a problem on its
// accuracy/cost front.
func (fm *figureMaker) frontRows(v *problemView) map[int]bool {
	pts := fm.costPoints(v)
	cost, errs := make([]float64, len(pts)), make([]float64, len(pts))
	for i, c := range pts {
		cost[i], errs[i] = c.ns, c.rmse
	}
	on := paretoFront(cost, errs)
	out := map[int]bool{}
	for _, i := range v.rows {
		r := &fm.rows[i]
		for j, c := range pts {
			if on[j] && c.key == configKey(r.Filter, r.Config) {
				out[i] = true
			}
		}
	}
	return out
}

// errPoints are points with vertical error bars.
type errPoints struct {
	plotter.XYs
	plotter.YErrors
}

func (fm *figureMaker) costFigure(v *problemView, legW vg.Length) (Figure, bool, error) {
	pts := fm.costPoints(v)
	if len(pts) == 0 {
		return Figure{}, false, nil
	}
	p := newPlot(v.label+": accuracy and cost", "time per step", "RMSE")
	cost, errs := make([]float64, len(pts)), make([]float64, len(pts))
	var ys []float64
	for i, c := range pts {
		cost[i], errs[i] = c.ns, c.rmse
		ys = append(ys, c.rmse, c.rmseLo, c.rmseHi)
	}
	// Time per step is always on a log axis: configurations differ by factors.
	xa := axisChoice{log: true, lo: plotMin(cost), hi: plotMax(cost)}
	if xa.hi/xa.lo < 10 { // at least one decade, centred on the points
		c := math.Sqrt(xa.lo * xa.hi)
		xa.lo, xa.hi = c/math.Sqrt(10), c*math.Sqrt(10)
	}
	xa.apply(&p.X, false, timeLabel)
	ya := chooseAxis(ys)
	ya.apply(&p.Y, false, nil) // zoomed to the points: differences in RMSE matter here

	on := paretoFront(cost, errs)
	var front plotter.XYs
	for i, c := range pts {
		if on[i] {
			front = append(front, plotter.XY{X: xa.tr(c.ns), Y: ya.tr(c.rmse)})
		}
	}
	sort.Slice(front, func(a, b int) bool { return front[a].X < front[b].X })
	frontLine := &plotter.Line{XYs: front, StepStyle: plotter.PostStep,
		LineStyle: draw.LineStyle{Color: frontColour, Width: vg.Points(1), Dashes: []vg.Length{vg.Points(4), vg.Points(3)}}}
	if len(front) > 1 {
		p.Add(frontLine)
	}
	ring := &plotter.Scatter{XYs: front, GlyphStyle: draw.GlyphStyle{Color: frontColour, Radius: vg.Points(6), Shape: draw.RingGlyph{}}}
	p.Add(ring)

	var items []legendItem
	for _, c := range pts {
		st := fm.style(c.key)
		if !ya.drawable(c.rmse) {
			continue
		}
		y := ya.tr(c.rmse)
		xy := plotter.XYs{{X: xa.tr(c.ns), Y: y}}
		if ya.drawable(c.rmseLo) && ya.drawable(c.rmseHi) {
			eb, err := plotter.NewYErrorBars(errPoints{xy, plotter.YErrors{{Low: y - ya.tr(c.rmseLo), High: ya.tr(c.rmseHi) - y}}})
			if err != nil {
				return Figure{}, false, err
			}
			eb.LineStyle = draw.LineStyle{Color: st.colour, Width: vg.Points(1.2)}
			eb.CapWidth = vg.Points(6)
			p.Add(eb)
		}
		dot := &plotter.Scatter{XYs: xy, GlyphStyle: draw.GlyphStyle{Color: st.colour, Radius: vg.Points(3.5), Shape: draw.CircleGlyph{}}}
		p.Add(dot)
		items = append(items, legendItem{keyLabel(c.key), []plot.Thumbnailer{dot}})
	}
	items = append(items, legendItem{"accuracy/cost front", []plot.Thumbnailer{frontLine, &plotter.Scatter{GlyphStyle: ring.GlyphStyle}}})
	caption := "RMSE (dots; bars: 95% bootstrap interval over runs) against the median time per step, " +
		"logarithmic x-axis. Ringed points joined by the dashed staircase form the accuracy/cost front: " +
		"no other configuration is at once as fast and as accurate, and strictly better in one of the two. " +
		"Times depend on the machine (see the manifest below); RMSE does not. " + axisSentence(ya, "")
	f, err := renderFigure(v, FigureCost, p, items, legW, caption)
	return f, err == nil, err
}

func plotMin(v []float64) float64 {
	m := math.Inf(1)
	for _, x := range v {
		m = math.Min(m, x)
	}
	return m
}

func plotMax(v []float64) float64 {
	m := math.Inf(-1)
	for _, x := range v {
		m = math.Max(m, x)
	}
	return m
}

// renderFigure draws a plot with its legend to the right into SVG and PNG.
func renderFigure(v *problemView, kind string, p *plot.Plot, items []legendItem, legW vg.Length, caption string) (Figure, error) {
	leg := plot.NewLegend()
	leg.TextStyle = textStyle(legendSize)
	leg.Top, leg.Left = true, true
	leg.ThumbnailWidth = vg.Points(20)
	leg.Padding = vg.Points(2)
	leg.YOffs = -vg.Points(24) // level with the top of the data area, below the title
	for _, it := range items {
		leg.Add(it.label, it.thumbs...)
	}
	w, h := plotWidth+legW, plotHeight
	drawAll := func(c draw.Canvas) {
		c.SetColor(color.White)
		c.Fill(c.Rectangle.Path())
		p.Draw(draw.Crop(c, 0, -legW, 0, 0))
		lc := draw.Crop(c, plotWidth+vg.Points(10), 0, 0, 0)
		leg.Draw(lc)
	}

	sc := vgsvg.NewWith(vgsvg.UseWH(w, h))
	drawAll(draw.New(sc))
	var svg bytes.Buffer
	if _, err := sc.WriteTo(&svg); err != nil {
		return Figure{}, fmt.Errorf("results: drawing %s-%s: %w", v.slug, kind, err)
	}
	ic := vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(pngDPI))
	drawAll(draw.New(ic))
	var png bytes.Buffer
	if _, err := (vgimg.PngCanvas{Canvas: ic}).WriteTo(&png); err != nil {
		return Figure{}, fmt.Errorf("results: drawing %s-%s: %w", v.slug, kind, err)
	}
	return Figure{
		Name: v.slug + "-" + kind, Problem: v.label, Kind: kind, Title: p.Title.Text,
		Caption: caption, SVG: withFontFallback(svg.Bytes()), PNG: png.Bytes(),
	}, nil
}

// withFontFallback names the metric-compatible fallbacks after Liberation
// Sans, so that a viewer without it draws the text in a font of the same
// widths rather than its default serif.
func withFontFallback(svg []byte) []byte {
	return bytes.ReplaceAll(svg, []byte("font-family:Liberation Sans;"),
		[]byte("font-family:'Liberation Sans',Arial,Helvetica,sans-serif;"))
}

// WritePlotFiles writes every figure as dir/<name>.svg and dir/<name>.png,
// each atomically, creating dir if needed. It returns the names of the
// files written, relative to dir.
func WritePlotFiles(dir string, figs []Figure) ([]string, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, fmt.Errorf("results: %w", err)
	}
	var names []string
	for _, f := range figs {
		for _, out := range []struct {
			ext  string
			data []byte
		}{{".svg", f.SVG}, {".png", f.PNG}} {
			name := f.Name + out.ext
			err := WriteFileAtomic(filepath.Join(dir, name), func(w io.Writer) error {
				_, err := w.Write(out.data)
				return err
			})
			if err != nil {
				return names, err
			}
			names = append(names, name)
		}
	}
	return names, nil
}
