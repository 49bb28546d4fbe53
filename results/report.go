package results

import (
	"bytes"
	"fmt"
	"html"
	"html/template"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"time"
)

// ReportData is what a report is made of: the files of one result folder.
type ReportData struct {
	Rows     []SummaryRow // summary.parquet
	Curves   []CurveRow   // curves.parquet
	Manifest Manifest     // manifest.json
}

// ReportInputs are the files of a result folder that a report reads.
var ReportInputs = []string{"summary.parquet", "curves.parquet", "manifest.json"}

// ReadReportData reads summary.parquet, curves.parquet and manifest.json
// of dir. A missing file is an error naming it.
func ReadReportData(dir string) (*ReportData, error) {
	st, err := os.Stat(dir)
	if err != nil {
		return nil, fmt.Errorf("results: %w", err)
	}
	if !st.IsDir() {
		return nil, fmt.Errorf("results: %s is not a directory", dir)
	}
	for _, f := range ReportInputs {
		if _, err := os.Stat(filepath.Join(dir, f)); err != nil {
			return nil, fmt.Errorf("results: %s has no %s (is it a folder written by estbench run?)", dir, f)
		}
	}
	d := &ReportData{}
	if d.Manifest, err = ReadManifest(filepath.Join(dir, "manifest.json")); err != nil {
		return nil, err
	}
	if d.Rows, err = ReadSummaryParquet(filepath.Join(dir, "summary.parquet")); err != nil {
		return nil, err
	}
	if d.Curves, err = ReadCurvesParquet(filepath.Join(dir, "curves.parquet")); err != nil {
		return nil, err
	}
	return d, nil
}

// ReportProvenance is the provenance of a result folder, from its
// manifest: the tool string carries the version and the VCS revision.
func ReportProvenance(m Manifest) Provenance {
	date := m.End
	if date.IsZero() {
		date = m.Start
	}
	return Provenance{
		Suite: m.Suite, SuiteSHA256: m.SuiteSHA256, Seed: m.Seed, Runs: m.Runs,
		Tool: toolOf(m), Date: date,
	}
}

// toolOf is "estbench v0.2.0 (rev 0123456789ab, modified)".
func toolOf(m Manifest) string {
	name := m.Tool
	if name == "" {
		name = "estbench"
	}
	if m.Version != "" {
		name += " " + m.Version
	}
	if m.VCSRevision != "" {
		rev := m.VCSRevision
		if len(rev) > 12 {
			rev = rev[:12]
		}
		name += " (rev " + rev
		if m.VCSModified != nil && *m.VCSModified {
			name += ", modified"
		}
		name += ")"
	}
	return name
}

// machineLine says where the timings were measured.
func machineLine(m Manifest) string {
	var parts []string
	if m.CPU != "" {
		parts = append(parts, m.CPU)
	}
	if m.OS != "" || m.Arch != "" {
		parts = append(parts, m.OS+"/"+m.Arch)
	}
	if m.GOMAXPROCS > 0 {
		parts = append(parts, "GOMAXPROCS "+strconv.Itoa(m.GOMAXPROCS))
	}
	if m.GoVersion != "" {
		parts = append(parts, m.GoVersion)
	}
	if len(parts) == 0 {
		return ""
	}
	return "Timings measured on " + strings.Join(parts, ", ") + "; other columns do not depend on the machine."
}

// ReportTableFormats are the formats of WriteReportTable.
var ReportTableFormats = []string{"latex", "markdown"}

// WriteReportTable writes the summary of a result folder as a table to
// cite: "latex" (booktabs; a caption, a label tab:estbench-<suite>, and
// the notes, legend, provenance and machine in a footnote-size block) or
// "markdown" (a caption line, the table, notes, legend, provenance and
// machine). Intervals and bounds stand beside their values, as in
// WriteSummary.
func WriteReportTable(w io.Writer, format string, d *ReportData) error {
	prov := ReportProvenance(d.Manifest)
	h := buildHuman(d.Rows, prov)
	caption := reportCaption(d)
	machine := machineLine(d.Manifest)
	switch format {
	case "latex":
		f := texFrame{caption: caption, label: "tab:estbench-" + slugOf(d.Manifest.Suite)}
		if h.prov != "" {
			f.footer = append(f.footer, "Provenance: "+h.prov+".")
		}
		if machine != "" {
			f.footer = append(f.footer, machine)
		}
		return writeLaTeXFramed(w, h, f)
	case "markdown":
		if machine != "" {
			h.prov += ". " + machine
		}
		if _, err := io.WriteString(w, "**"+caption+"**\n\n"); err != nil {
			return err
		}
		return writeMarkdown(w, h)
	}
	return fmt.Errorf("results: unknown report table format %q (valid: %s)", format, strings.Join(ReportTableFormats, ", "))
}

// reportCaption is the one-sentence caption of a report table.
func reportCaption(d *ReportData) string {
	c := "estbench results"
	if d.Manifest.Suite != "" {
		c += " for the suite " + d.Manifest.Suite
	}
	c += ": RMSE with its 95% bootstrap interval over runs, ANEES and ANIS with their two-sided 95% chi-square bounds"
	if d.Manifest.Runs > 0 {
		c += ", " + strconv.Itoa(d.Manifest.Runs) + " Monte Carlo runs per pair"
	}
	return c + "."
}

// WriteReportHTML writes the report of a result folder as one
// self-contained HTML page: the summary table with its marks and notes,
// per problem a few words on who leads and the figures as inline SVG, and
// the manifest. It loads nothing: no scripts, no external style sheets,
// fonts or images. When plotDir is not "", each figure links to its
// standalone files plotDir/<name>.svg and .png (a relative URL path, as
// written by WritePlotFiles).
func WriteReportHTML(w io.Writer, d *ReportData, figs []Figure, plotDir string) error {
	page, err := buildPage(d, figs, plotDir)
	if err != nil {
		return err
	}
	var b bytes.Buffer
	if err := reportTemplate.Execute(&b, page); err != nil {
		return fmt.Errorf("results: report: %w", err)
	}
	_, err = w.Write(b.Bytes())
	return err
}

// WriteReportHTMLFile writes the HTML report to path, atomically.
func WriteReportHTMLFile(path string, d *ReportData, figs []Figure, plotDir string) error {
	return WriteFileAtomic(path, func(w io.Writer) error {
		return WriteReportHTML(w, d, figs, plotDir)
	})
}

// humanCols are the positions of the columns that the report reads in a
// human layout, found by their headings (the layout drops columns that no
// row fills, so positions vary); -1 where absent.
type humanCols struct {
	config, rmse, anees, anis, time, notes int
}

func findCols(h *human) humanCols {
	c := humanCols{-1, -1, -1, -1, -1, -1}
	for j, t := range h.head {
		name, _, _ := strings.Cut(t, " ")
		switch name {
		case "config":
			c.config = j
		case "RMSE":
			c.rmse = j
		case "ANEES":
			c.anees = j
		case "ANIS":
			c.anis = j
		case "notes":
			c.notes = j
		case "ns/step", "µs/step", "ms/step", "s/step":
			c.time = j
		}
	}
	return c
}

// humanCell is h.cells[i][j], or "" when column j is absent.
func humanCell(h *human, i, j int) string {
	if j < 0 {
		return ""
	}
	return h.cells[i][j]
}

// page is what the HTML template shows.
type page struct {
	Title    string
	Subtitle string
	Prov     string
	Head     []headCell
	Rows     []tableRow
	Notes    []string
	Legend   []string
	Problems []problemSection
	Manifest []manifestItem
	Command  string
	Files    []string
}

type headCell struct {
	Text  string
	Sub   string // "[95% CI]", "[95% bounds]": set under the name
	Right bool
}

type tableRow struct {
	Cells      []tableCell
	GroupStart bool // first row of a problem
	Inactive   bool // the pair did not apply
}

type tableCell struct {
	Text  string
	Sub   string // the interval or bounds of the value, set under it
	Mark  string // "in", "high", "low" or ""
	Right bool
	Notes []int // footnote numbers
	Front bool  // the row is on its problem's accuracy/cost front
}

type problemSection struct {
	Label   string
	Anchor  string
	Lines   []string
	Figures []figureView
}

type figureView struct {
	ID      string
	Caption string
	SVG     template.HTML
	SVGHref string
	PNGHref string
}

type manifestItem struct {
	Term, Value string
	Code        bool
}

func buildPage(d *ReportData, figs []Figure, plotDir string) (*page, error) {
	m := d.Manifest
	prov := ReportProvenance(m)
	h := buildHuman(d.Rows, prov)
	views := groupProblems(d.Rows, d.Curves)
	fm := &figureMaker{rows: d.Rows, styles: styleIndex(d.Rows)}
	front := map[int]bool{}
	for _, v := range views {
		for i := range fm.frontRows(v) {
			front[i] = true
		}
	}

	p := &page{Title: "estbench report", Prov: h.prov, Notes: h.notes, Command: shellJoin(m.Command), Files: m.Files}
	if m.Suite != "" {
		p.Title += ": " + m.Suite
	}
	p.Subtitle = subtitle(d, views)

	// The HTML table has no notes column: a row's note references and its
	// front badge follow its config.
	col := findCols(h)
	for j, t := range h.head {
		if j == col.notes {
			continue
		}
		hc := headCell{Text: t, Right: h.right[j]}
		if k := strings.Index(t, " ["); k > 0 {
			hc.Text, hc.Sub = t[:k], t[k+1:]
		} else if k := strings.Index(t, " ("); k > 0 {
			hc.Text, hc.Sub = t[:k], t[k+1:]
		}
		p.Head = append(p.Head, hc)
	}
	prev := ""
	for i, cells := range h.cells {
		r := &d.Rows[i]
		row := tableRow{GroupStart: i == 0 || r.Problem != prev, Inactive: !r.Applicable}
		prev = r.Problem
		for j, c := range cells {
			cell := tableCell{Text: c, Right: h.right[j]}
			switch j {
			case col.config:
				cell.Front = front[i]
				for _, n := range strings.Split(strings.Trim(humanCell(h, i, col.notes), "[]"), ",") {
					if k, err := strconv.Atoi(n); err == nil {
						cell.Notes = append(cell.Notes, k)
					}
				}
			case col.rmse, col.anees, col.anis:
				for _, mk := range []string{"in", "high", "low"} {
					if t, ok := strings.CutSuffix(cell.Text, " "+mk); ok && j != col.rmse {
						cell.Text, cell.Mark = t, mk
					}
				}
				if k := strings.Index(cell.Text, " ["); k > 0 {
					cell.Text, cell.Sub = cell.Text[:k], cell.Text[k+1:]
				}
			case col.notes:
				continue
			}
			row.Cells = append(row.Cells, cell)
		}
		p.Rows = append(p.Rows, row)
	}
	if h.legend {
		p.Legend = append(p.Legend, legend,
			"front: the configuration is on the accuracy/cost front of its problem; no other configuration of the problem is at once as fast and as accurate (RMSE and time per step), and strictly better in one of the two.")
	}

	// Per problem the accuracy/cost scatter comes first, beside the digest.
	byProblem := map[string][]Figure{}
	for _, kind := range []string{FigureCost, FigureRMSE, FigureNEES} {
		for _, f := range figs {
			if f.Kind == kind {
				byProblem[f.Problem] = append(byProblem[f.Problem], f)
			}
		}
	}
	for _, v := range views {
		s := problemSection{Label: v.label, Anchor: "problem-" + v.slug, Lines: problemLines(d.Rows, h, v, front)}
		for _, f := range byProblem[v.label] {
			svg, err := inlineSVG(f.SVG, "fig-"+f.Name, f.Title)
			if err != nil {
				return nil, err
			}
			fv := figureView{ID: "fig-" + f.Name, Caption: f.Caption, SVG: svg}
			if plotDir != "" {
				fv.SVGHref = plotDir + "/" + f.Name + ".svg"
				fv.PNGHref = plotDir + "/" + f.Name + ".png"
			}
			s.Figures = append(s.Figures, fv)
		}
		p.Problems = append(p.Problems, s)
	}
	p.Manifest = manifestItems(m)
	return p, nil
}

// subtitle counts the problems, configurations and runs.
func subtitle(d *ReportData, views []*problemView) string {
	configs := map[string]bool{}
	for i := range d.Rows {
		configs[configKey(d.Rows[i].Filter, d.Rows[i].Config)] = true
	}
	s := plural(len(views), "problem") + " × " + plural(len(configs), "filter configuration")
	if d.Manifest.Runs > 0 {
		s += ", " + plural(d.Manifest.Runs, "Monte Carlo run") + " per pair"
	}
	s += ", seed " + strconv.FormatUint(d.Manifest.Seed, 10)
	if !d.Manifest.End.IsZero() {
		s += "; finished " + d.Manifest.End.UTC().Format("2006-01-02 15:04:05") + " UTC"
	}
	return s
}

func plural(n int, word string) string {
	if n == 1 {
		return "1 " + word
	}
	return strconv.Itoa(n) + " " + word + "s"
}

// problemLines are a few sentences on a problem, with the numbers as the
// table shows them: the lowest RMSE, the fastest configuration, which
// configurations are consistent, which pairs did not apply or diverged.
func problemLines(rows []SummaryRow, h *human, v *problemView, front map[int]bool) []string {
	col := findCols(h)
	best, fast := -1, -1
	var consistent, frontNames, na, div []string
	for _, i := range v.rows {
		r := &rows[i]
		name := configLabel(r.Filter, r.Config)
		if !r.Applicable {
			na = append(na, name)
			continue
		}
		if plotFinite(r.RMSE) && (best < 0 || r.RMSE < rows[best].RMSE) {
			best = i
		}
		if plotFinite(r.NsPerStep) && r.NsPerStep > 0 && (fast < 0 || r.NsPerStep < rows[fast].NsPerStep) {
			fast = i
		}
		if strings.HasSuffix(humanCell(h, i, col.anees), " in") {
			consistent = append(consistent, name)
		}
		if front[i] {
			frontNames = append(frontNames, name)
		}
		if r.Diverged > 0 {
			div = append(div, fmt.Sprintf("%s (%d of %d runs)", name, r.Diverged, r.Runs))
		}
	}
	var out []string
	if best >= 0 {
		out = append(out, "Lowest RMSE: "+configLabel(rows[best].Filter, rows[best].Config)+", "+humanCell(h, best, col.rmse)+".")
	}
	if fast >= 0 && col.time >= 0 {
		out = append(out, "Fastest: "+configLabel(rows[fast].Filter, rows[fast].Config)+", "+humanCell(h, fast, col.time)+" "+h.head[col.time]+".")
	}
	if len(frontNames) > 0 {
		out = append(out, "On the accuracy/cost front: "+strings.Join(frontNames, ", ")+".")
	}
	switch {
	case best < 0:
	case len(consistent) == 0:
		out = append(out, "No configuration has its ANEES inside the 95% bounds.")
	default:
		out = append(out, "ANEES inside the 95% bounds: "+strings.Join(consistent, ", ")+".")
	}
	if len(div) > 0 {
		out = append(out, "Diverged runs (left out of the metrics): "+strings.Join(div, ", ")+".")
	}
	if len(na) > 0 {
		out = append(out, "Not applicable (see the notes): "+strings.Join(na, ", ")+".")
	}
	return out
}

// manifestItems lay out the manifest for a reader who wants to reproduce
// the results.
func manifestItems(m Manifest) []manifestItem {
	var it []manifestItem
	add := func(term, value string, code bool) {
		if value != "" {
			it = append(it, manifestItem{term, value, code})
		}
	}
	add("tool", toolOf(m), false)
	add("VCS revision", m.VCSRevision, true)
	add("suite", m.Suite, false)
	add("suite sha256", m.SuiteSHA256, true)
	add("seed", strconv.FormatUint(m.Seed, 10), true)
	if m.Runs > 0 {
		add("runs per pair", strconv.Itoa(m.Runs), false)
	}
	if m.Workers > 0 {
		add("workers", strconv.Itoa(m.Workers), false)
	} else {
		add("workers", "one per CPU (never changes a result)", false)
	}
	add("started", timeText(m.Start), false)
	add("finished", timeText(m.End), false)
	if !m.Start.IsZero() && !m.End.IsZero() && !m.End.Before(m.Start) {
		add("duration", m.End.Sub(m.Start).Round(time.Millisecond).String(), false)
	}
	add("Go", m.GoVersion, false)
	if m.OS != "" || m.Arch != "" {
		add("OS/arch", m.OS+"/"+m.Arch, false)
	}
	add("CPU", m.CPU, false)
	if m.GOMAXPROCS > 0 || m.NumCPU > 0 {
		add("GOMAXPROCS / CPUs", strconv.Itoa(m.GOMAXPROCS)+" / "+strconv.Itoa(m.NumCPU), false)
	}
	add("files", strings.Join(m.Files, ", "), false)
	return it
}

func timeText(t time.Time) string {
	if t.IsZero() {
		return ""
	}
	return t.UTC().Format(time.RFC3339)
}

// shellJoin writes a command line as a POSIX shell would read it back,
// quoting words that need it.
func shellJoin(args []string) string {
	q := make([]string, len(args))
	for i, a := range args {
		q[i] = shellQuote(a)
	}
	return strings.Join(q, " ")
}

var shellSafe = regexp.MustCompile(`^[A-Za-z0-9_@%+=:,./-]+$`)

func shellQuote(s string) string {
	if shellSafe.MatchString(s) {
		return s
	}
	return "'" + strings.ReplaceAll(s, "'", `'\''`) + "'"
}

var viewBoxRE = regexp.MustCompile(`viewBox="([0-9. ]+)"`)

// inlineSVG turns a standalone SVG document into an element for an HTML
// page: no XML declaration, no namespace declarations (the HTML parser
// puts <svg> in the SVG namespace itself), a title for screen readers, and
// the size left to the style sheet.
func inlineSVG(doc []byte, id, title string) (template.HTML, error) {
	start := bytes.Index(doc, []byte("<svg"))
	if start < 0 {
		return "", fmt.Errorf("results: figure %s: no <svg> element", id)
	}
	end := bytes.IndexByte(doc[start:], '>')
	if end < 0 {
		return "", fmt.Errorf("results: figure %s: unterminated <svg> tag", id)
	}
	tag := doc[start : start+end+1]
	vb := viewBoxRE.FindSubmatch(tag)
	if vb == nil {
		return "", fmt.Errorf("results: figure %s: <svg> has no viewBox", id)
	}
	var b strings.Builder
	b.WriteString(`<svg class="plot" viewBox="` + string(vb[1]) + `" role="img" aria-labelledby="` + id + `-title">`)
	b.WriteString(`<title id="` + id + `-title">` + html.EscapeString(title) + `</title>`)
	b.Write(bytes.TrimSpace(doc[start+end+1:]))
	return template.HTML(b.String()), nil
}

var reportTemplate = template.Must(template.New("report").
	Funcs(template.FuncMap{"inc": func(i int) int { return i + 1 }}).
	Parse(reportHTML))

// reportHTML is the page. Its style sheet is inline and names only fonts
// that are on the reader's machine.
const reportHTML = `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="generator" content="estbench report">
<title>{{.Title}}</title>
<style>
:root { --ink: #1d232b; --muted: #5b6572; --rule: #d9dee4; --band: #f4f6f8; --accent: #0b5fa5; }
* { box-sizing: border-box; }
body { margin: 0; color: var(--ink); background: #fff;
  font: 15px/1.5 system-ui, -apple-system, "Segoe UI", "Liberation Sans", "DejaVu Sans", Arial, sans-serif; }
main { max-width: 1240px; margin: 0 auto; padding: 28px 32px 48px; }
header.top { border-bottom: 3px solid var(--ink); padding-bottom: 12px; margin-bottom: 8px; }
h1 { font-size: 26px; margin: 0 0 4px; letter-spacing: -0.01em; }
h2 { font-size: 20px; margin: 36px 0 10px; padding-bottom: 4px; border-bottom: 1px solid var(--rule); }
.sub { color: var(--muted); margin: 0; }
.prov { color: var(--muted); font-size: 12.5px; margin: 6px 0 0; word-break: break-all; }
nav.toc { font-size: 14px; margin: 10px 0 0; }
nav.toc a { color: var(--accent); text-decoration: none; margin-right: 14px; white-space: nowrap; }
nav.toc a:hover { text-decoration: underline; }
.tablewrap { overflow-x: auto; border: 1px solid var(--rule); border-radius: 6px; }
table.summary { border-collapse: collapse; width: 100%; font-size: 12.5px; font-variant-numeric: tabular-nums; }
table.summary th, table.summary td { padding: 4px 6px; text-align: left; white-space: nowrap; vertical-align: top; }
table.summary .sub { display: block; font-size: 11.5px; color: var(--muted); font-weight: normal; }
table.summary th { background: var(--band); font-weight: 600; border-bottom: 1px solid var(--rule); position: sticky; top: 0; }
table.summary .r { text-align: right; }
table.summary tr.group td { border-top: 1px solid #b9c1ca; }
table.summary tbody tr:first-child td { border-top: none; }
table.summary tr.na td { color: var(--muted); }
.mark { display: inline-block; min-width: 3.1em; margin-left: 5px; padding: 0 5px; border-radius: 9px;
  font-size: 11.5px; font-weight: 600; text-align: center; }
.mark.in { background: #dff3e6; color: #16633a; }
.mark.high { background: #fbe3de; color: #9b2c17; }
.mark.low { background: #fdf0d3; color: #7d5200; }
.front { display: inline-block; margin-left: 5px; padding: 0 6px; border-radius: 9px; background: #e6eef7; color: #164a7a;
  font-size: 11.5px; font-weight: 600; }
sup.ref a { color: var(--accent); text-decoration: none; }
ol.notes { font-size: 13px; margin: 12px 0 4px; padding-left: 24px; }
p.legend { font-size: 13px; color: var(--muted); margin: 4px 0; }
section.problem .lines { margin: 0; padding: 14px 18px; list-style: none; font-size: 14px; background: var(--band);
  border-radius: 6px; align-self: start; }
section.problem .lines li { margin: 3px 0; }
.figs { display: grid; grid-template-columns: repeat(auto-fit, minmax(520px, 1fr)); gap: 22px 26px; }
figure { margin: 0; }
svg.plot { display: block; width: 100%; height: auto; }
figcaption { font-size: 13px; color: var(--muted); margin-top: 6px; }
figcaption .files a { color: var(--accent); margin-right: 8px; }
dl.manifest { display: grid; grid-template-columns: max-content 1fr; gap: 4px 18px; font-size: 14px; margin: 0; }
dl.manifest dt { color: var(--muted); }
dl.manifest dd { margin: 0; word-break: break-all; }
code { font-family: ui-monospace, "DejaVu Sans Mono", "Liberation Mono", Menlo, Consolas, monospace; font-size: 12.5px;
  background: var(--band); padding: 1px 4px; border-radius: 3px; }
.repro { font-size: 14px; }
footer { margin-top: 36px; font-size: 12px; color: var(--muted); border-top: 1px solid var(--rule); padding-top: 8px; }
@media print { main { max-width: none; padding: 0; } .figs { grid-template-columns: 1fr 1fr; } h2 { break-after: avoid; } figure { break-inside: avoid; } }
</style>
</head>
<body>
<main>
<header class="top">
<h1>{{.Title}}</h1>
<p class="sub">{{.Subtitle}}</p>
{{with .Prov}}<p class="prov">{{.}}</p>{{end}}
<nav class="toc"><a href="#summary">Summary</a>{{range .Problems}}<a href="#{{.Anchor}}">{{.Label}}</a>{{end}}<a href="#manifest">Reproduce</a></nav>
</header>

<section id="summary">
<h2>Summary</h2>
<div class="tablewrap">
<table class="summary">
<thead><tr>{{range .Head}}<th{{if .Right}} class="r"{{end}}>{{.Text}}{{with .Sub}}<span class="sub">{{.}}</span>{{end}}</th>{{end}}</tr></thead>
<tbody>
{{range .Rows}}<tr{{if or .GroupStart .Inactive}} class="{{if .GroupStart}}group{{end}}{{if .Inactive}} na{{end}}"{{end}}>{{range .Cells}}<td{{if .Right}} class="r"{{end}}>{{.Text}}{{if .Front}}<span class="front">front</span>{{end}}{{with .Mark}}<span class="mark {{.}}">{{.}}</span>{{end}}{{with .Sub}}<span class="sub">{{.}}</span>{{end}}{{range $i, $n := .Notes}}<sup class="ref">{{if $i}},{{end}}<a href="#note-{{$n}}">[{{$n}}]</a></sup>{{end}}</td>{{end}}</tr>
{{end}}</tbody>
</table>
</div>
{{with .Notes}}<ol class="notes">{{range $i, $n := .}}<li id="note-{{inc $i}}">{{$n}}</li>{{end}}</ol>{{end}}
{{range .Legend}}<p class="legend">{{.}}</p>
{{end}}</section>
{{range .Problems}}
<section class="problem" id="{{.Anchor}}">
<h2>{{.Label}}</h2>
{{if .Figures}}<div class="figs">
<ul class="lines">{{range .Lines}}<li>{{.}}</li>{{end}}</ul>
{{range .Figures}}<figure id="{{.ID}}">
{{.SVG}}
<figcaption>{{.Caption}}{{if .SVGHref}} <span class="files"><a href="{{.SVGHref}}">SVG</a><a href="{{.PNGHref}}">PNG</a></span>{{end}}</figcaption>
</figure>
{{end}}</div>{{else}}<ul class="lines">{{range .Lines}}<li>{{.}}</li>{{end}}</ul>
<p>No figures: no configuration ran on this problem.</p>{{end}}
</section>
{{end}}
<section id="manifest">
<h2>Reproduce</h2>
<p class="repro">Every number but the timing columns is determined by the suite and the seed: running the same suite
(its canonical form must have the SHA-256 below) with the same seed and runs gives the same values on any machine and
for any number of workers.{{with .Command}} This folder was made by <code>{{.}}</code>.{{end}}</p>
<dl class="manifest">
{{range .Manifest}}<dt>{{.Term}}</dt><dd>{{if .Code}}<code>{{.Value}}</code>{{else}}{{.Value}}{{end}}</dd>
{{end}}</dl>
</section>
<footer>Written by estbench report from summary.parquet, curves.parquet and manifest.json. Figures drawn with gonum/plot.</footer>
</main>
</body>
</html>
`
