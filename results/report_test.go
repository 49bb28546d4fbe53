package results

import (
	"bytes"
	"encoding/xml"
	"image"
	"image/color"
	"image/png"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"golang.org/x/net/html"

	"github.com/estbench/estbench/metrics"
)

// reportFixture is a constructed result folder (not the output of a run):
// a shore radar following a harbour launch (cv2d), the growth model (ungm,
// where kf does not apply) and a turning target with diverged runs. The
// summary values are typed in; the per-step curves are smooth made-up
// shapes, except their chi-square bounds, which are computed for the runs
// that contributed (Bar-Shalom, Li & Kirubarajan 2001, §5.4.2, through
// metrics.ChiSquareBounds). The tests here check layout, not numbers.
func reportFixture() *ReportData {
	s := func(runs, div int, rmse, lo, hi, anees, alo, ahi, med, in, anis, nlo, nhi, ns float64) metrics.Summary {
		return metrics.Summary{Runs: runs, Diverged: div, RMSE: rmse, RMSELo: lo, RMSEHi: hi,
			ANEES: anees, ANEESLo: alo, ANEESHi: ahi, ANEESRunMedian: med, NEESInBounds: in,
			ANIS: anis, ANISLo: nlo, ANISHi: nhi, NISInBounds: nan, NsPerStep: ns, MeanESS: nan, PredRMSE: nan}
	}
	rows := []SummaryRow{
		{Problem: "cv2d", Filter: "kf", Applicable: true, Summary: s(50, 0, 8.71, 8.49, 8.95, 4.012, 3.890, 4.112, 3.978, 0.95, 2.004, 1.945, 2.056, 1480)},
		{Problem: "cv2d", Filter: "ukf", Applicable: true, Summary: s(50, 0, 8.71, 8.49, 8.95, 4.012, 3.890, 4.112, 3.978, 0.95, 2.004, 1.945, 2.056, 2610)},
		{Problem: "cv2d", Filter: "pf", Config: "particles=500", Applicable: true, Summary: s(50, 0, 8.93, 8.70, 9.18, 5.31, 3.890, 4.112, 4.64, 0.61, 2.07, 1.945, 2.056, 251000)},
		{Problem: "ungm", Filter: "kf", Note: "kf needs a linear model; ungm is nonlinear"},
		{Problem: "ungm", Filter: "ukf", Applicable: true, Summary: s(50, 0, 7.82, 7.61, 8.05, 1.52, 0.945, 1.057, 1.31, 0.11, 0.51, 0.945, 1.057, 690)},
		{Problem: "ungm", Filter: "pf", Config: "particles=500", Applicable: true, Summary: s(50, 0, 4.75, 4.55, 4.96, 3.1e9, 0.945, 1.057, 1.12, 0.55, 1.09, 0.945, 1.057, 17300)},
		{Problem: "ctrb(steps=60)", Filter: "ukf", Applicable: true, Summary: s(50, 0, 19.1, 17.8, 20.6, 5.13, 4.862, 5.140, 4.99, 0.86, 1.98, 1.945, 2.056, 4510)},
		{Problem: "ctrb(steps=60)", Filter: "pf", Config: "particles=500", Applicable: true, Summary: s(50, 2, 80.4, 19.7, 140.2, 2.4e7, 4.855, 5.147, 37.6, 0.02, 11.9, 1.94, 2.06, 690000)},
	}
	rows[7].Warnings = []string{"2 of 50 runs diverged (first: run 9, step 41: covariance not positive definite)"}

	// dims are the state dimensions of the problems, for the bounds.
	dims := map[string]float64{"cv2d": 4, "ungm": 1, "ctrb(steps=60)": 5}
	var curves []CurveRow
	for i, r := range rows {
		if !r.Applicable {
			continue
		}
		for k := 1; k <= 40; k++ {
			runs := r.Runs
			if k >= 30 { // the diverged runs stopped before step 30
				runs -= r.Diverged
			}
			n := dims[r.Problem]
			lo, hi := metrics.ChiSquareBounds(float64(runs)*n, float64(runs), 0.95)
			phase := float64(k)/4 + float64(i)
			c := metrics.CurvePoint{
				Step: k, Runs: runs,
				RMSE:    r.RMSE * (1 + 0.25*math.Sin(phase)),
				ANEES:   r.ANEES * (1 + 0.3*math.Cos(phase)) * math.Exp(-float64(40-k)/80),
				ANEESLo: lo, ANEESHi: hi,
				ANIS: r.ANIS,
			}
			if r.Diverged > 0 && k == 20 {
				c.ANEES = nan // a step where the average is missing: the line has a gap
			}
			curves = append(curves, CurveRow{Problem: r.Problem, Filter: r.Filter, Config: r.Config, CurvePoint: c})
		}
	}
	modified := false
	return &ReportData{
		Rows:   rows,
		Curves: curves,
		Manifest: Manifest{
			Tool: "estbench", Version: "v0.3.0", VCSRevision: "4f1c2a9be07d33e5a1c6b8d0e2f4a6c8b0d2e4f6", VCSModified: &modified,
			GoVersion: "go1.26.8", OS: "linux", Arch: "amd64", CPU: "Harbour Test CPU @ 2.0GHz", GOMAXPROCS: 2, NumCPU: 2,
			Suite: "harbour-launch", SuiteSHA256: "9f2c4e1a7b3d5f6081a2c3e4d5f60718293a4b5c6d7e8f90a1b2c3d4e5f60718",
			Seed: 20240611, Runs: 50, Workers: 2,
			Command: []string{"estbench", "run", "--suite", "harbour launch.toml", "--runs", "50"},
			Start:   time.Date(2025, 3, 14, 9, 26, 1, 0, time.UTC),
			End:     time.Date(2025, 3, 14, 9, 26, 53, 0, time.UTC),
			Files:   []string{"runs.parquet", "summary.parquet", "curves.parquet", "summary.md", "manifest.json"},
		},
	}
}

func TestReportTableGolden(t *testing.T) {
	for _, tc := range []struct{ format, file string }{
		{"latex", "report-table.tex"},
		{"markdown", "report-table.md"},
	} {
		t.Run(tc.format, func(t *testing.T) {
			d := reportFixture()
			var buf bytes.Buffer
			if err := WriteReportTable(&buf, tc.format, d); err != nil {
				t.Fatal(err)
			}
			checkGolden(t, tc.file, buf.Bytes())
		})
	}
	if err := WriteReportTable(io.Discard, "html", reportFixture()); err == nil {
		t.Error("WriteReportTable accepted the format html")
	}
}

// The LaTeX table carries what a reader needs to cite it: booktabs rules,
// the intervals and bounds beside the values, a caption and label, and the
// provenance (suite, sha256, seed, runs, tool with revision, date) and the
// machine in the footnote block.
func TestReportLaTeXProvenance(t *testing.T) {
	var buf bytes.Buffer
	if err := WriteReportTable(&buf, "latex", reportFixture()); err != nil {
		t.Fatal(err)
	}
	got := buf.String()
	for _, want := range []string{
		`\toprule`, `\midrule`, `\bottomrule`,
		`8.71 [8.49, 8.95]`, // rmse [lo, hi]
		`4.012 [3.890, 4.112] in`,
		`\label{tab:estbench-harbour-launch}`,
		`Provenance: suite harbour-launch, seed 20240611, 50 runs, estbench v0.3.0 (rev 4f1c2a9be07d), suite sha256 9f2c4e1a7b3d5f6081a2c3e4d5f60718293a4b5c6d7e8f90a1b2c3d4e5f60718, 2025-03-14T09:26:53Z.`,
		`Timings measured on Harbour Test CPU @ 2.0GHz, linux/amd64, GOMAXPROCS 2, go1.26.8`,
	} {
		if !strings.Contains(got, texEscape(want)) && !strings.Contains(got, want) {
			t.Errorf("latex table lacks %q", want)
		}
	}
	if i, j := strings.Index(got, `\caption{`), strings.Index(got, `\label{`); i < 0 || j < i {
		t.Errorf("caption and label missing or the label comes before the caption")
	}
}

// Hand-worked case of Pareto dominance (Deb 2001, "Multi-Objective
// Optimization using Evolutionary Algorithms", Definition 2.5: a dominates
// b when it is no worse in every objective and better in one).
func TestParetoFront(t *testing.T) {
	cost := []float64{1, 2, 2, 3, 5, 5, 0.5}
	errs := []float64{9, 4, 6, 4, 1, 1, 12}
	// 0: nothing is cheaper with less error except none (6 is cheaper but worse): on.
	// 1: on. 2: dominated by 1 (same cost, less error). 3: dominated by 1
	// (cheaper, equal error). 4 and 5 are equal and not dominated: both on.
	// 6: cheapest: on.
	want := []bool{true, true, false, false, true, true, true}
	got := paretoFront(cost, errs)
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("point %d (cost %g, error %g): on front %v, want %v", i, cost[i], errs[i], got[i], want[i])
		}
	}
}

func TestChooseAxis(t *testing.T) {
	for _, tc := range []struct {
		name string
		vals []float64
		log  bool
	}{
		{"narrow", []float64{3.9, 4.1, 5.2}, false},
		{"just under two decades", []float64{1, 99}, false},
		{"two decades", []float64{1, 100}, true},
		{"collapsed particle cloud", []float64{0.95, 1.05, 2e13}, true},
		{"a zero keeps it linear", []float64{0, 1, 1e6}, false},
		{"NaN and Inf are ignored", []float64{nan, 2, 3, math.Inf(1)}, false},
	} {
		if got := chooseAxis(tc.vals); got.log != tc.log {
			t.Errorf("%s: log %v, want %v", tc.name, got.log, tc.log)
		}
	}
}

func TestLogTicks(t *testing.T) {
	labels := func(lo, hi float64, format func(m, e int) string) []string {
		var out []string
		for _, tk := range (logTicker{format: format}).Ticks(math.Log10(lo), math.Log10(hi)) {
			if tk.Label != "" {
				out = append(out, tk.Label)
			}
		}
		return out
	}
	for _, tc := range []struct {
		lo, hi float64
		format func(m, e int) string
		want   string
	}{
		{0.5, 60, nil, "0.5 1 2 5 10 20 50"},
		{0.7, 2e5, nil, "1 10 100 1000 1e4 1e5"},
		{0.9, 3e13, nil, "1 100 1e4 1e6 1e8 1e10 1e12"},
		{300, 3e4, timeLabel, "500 ns 1 µs 2 µs 5 µs 10 µs 20 µs"},
		{300, 3e6, timeLabel, "1 µs 10 µs 100 µs 1 ms"},
		{2.1, 2.9, nil, "2.2 2.4 2.6 2.8"}, // within one mantissa step: round numbers of a linear axis
	} {
		if got := strings.Join(labels(tc.lo, tc.hi, tc.format), " "); got != tc.want {
			t.Errorf("[%g, %g]: labels %q, want %q", tc.lo, tc.hi, got, tc.want)
		}
	}
}

func TestSlugOf(t *testing.T) {
	for in, want := range map[string]string{
		"cv2d": "cv2d", "ctrb(steps=150)": "ctrb-steps-150", "lorenz96(n=40 forcing=8)": "lorenz96-n-40-forcing-8", "((": "problem",
	} {
		if got := slugOf(in); got != want {
			t.Errorf("slugOf(%q) = %q, want %q", in, got, want)
		}
	}
	views := groupProblems([]SummaryRow{{Problem: "a(b)"}, {Problem: "a[b]"}}, nil)
	if views[0].slug == views[1].slug {
		t.Errorf("two problems share the slug %q", views[0].slug)
	}
}

// fixtureFigs are the figures of reportFixture, drawn once for the tests
// that need them (drawing the PNGs takes most of a second).
var fixtureFigs struct {
	once sync.Once
	figs []Figure
	err  error
}

// writeFixtureReport writes the HTML report and the plot files of the
// fixture into a temporary folder and returns the page's path.
func writeFixtureReport(t *testing.T) (path string, figs []Figure) {
	t.Helper()
	d := reportFixture()
	fixtureFigs.once.Do(func() { fixtureFigs.figs, fixtureFigs.err = ReportFigures(d) })
	figs, err := fixtureFigs.figs, fixtureFigs.err
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	if _, err := WritePlotFiles(filepath.Join(dir, "plots"), figs); err != nil {
		t.Fatal(err)
	}
	path = filepath.Join(dir, "report.html")
	if err := WriteReportHTMLFile(path, d, figs, "plots"); err != nil {
		t.Fatal(err)
	}
	return path, figs
}

// The page parses as HTML (golang.org/x/net/html, an implementation of the
// WHATWG HTML parsing algorithm) into one <svg> per figure, one table row
// per summary row, the notes and the manifest, and refers to nothing
// outside itself but its own plot files.
func TestReportHTMLStructure(t *testing.T) {
	path, figs := writeFixtureReport(t)
	d := reportFixture()
	// 3 problems with curves: RMSE and NEES each; all 3 have a cost plot.
	if len(figs) != 9 {
		t.Fatalf("%d figures, want 9", len(figs))
	}
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if bytes.Contains(raw, []byte("http://")) || bytes.Contains(raw, []byte("https://")) {
		t.Errorf("the page contains an http(s) URL")
	}
	doc, err := html.Parse(bytes.NewReader(raw))
	if err != nil {
		t.Fatal(err)
	}
	var svgs, rows, notes []*html.Node
	var manifest *html.Node
	htmlWalk(doc, func(n *html.Node) {
		if n.Type != html.ElementNode {
			return
		}
		switch n.Data {
		case "svg":
			svgs = append(svgs, n)
		case "tr":
			if htmlAncestor(n, "tbody") != nil {
				rows = append(rows, n)
			}
		case "li":
			if strings.HasPrefix(htmlAttr(n, "id"), "note-") {
				notes = append(notes, n)
			}
		case "dl":
			if htmlAttr(n, "class") == "manifest" {
				manifest = n
			}
		case "script", "link", "iframe", "object", "embed", "img":
			t.Errorf("the page has a <%s> element", n.Data)
		}
		for _, a := range n.Attr {
			if (a.Key == "href" || a.Key == "src") && !strings.HasPrefix(a.Val, "#") && !strings.HasPrefix(a.Val, "plots/") {
				t.Errorf("<%s %s=%q> points outside the page and its plots", n.Data, a.Key, a.Val)
			}
			if a.Key == "style" && strings.Contains(a.Val, "url(") {
				t.Errorf("<%s> style loads %q", n.Data, a.Val)
			}
		}
	})
	if len(svgs) != len(figs) {
		t.Errorf("%d <svg> elements, want one per figure (%d)", len(svgs), len(figs))
	}
	for i, s := range svgs {
		if s.Namespace != "svg" || htmlAttr(s, "viewBox") == "" {
			t.Errorf("svg %d: namespace %q, viewBox %q", i, s.Namespace, htmlAttr(s, "viewBox"))
		}
		var paths, texts int
		htmlWalk(s, func(n *html.Node) {
			switch n.Data {
			case "path":
				paths++
			case "text":
				texts++
			}
		})
		if paths < 10 || texts < 5 {
			t.Errorf("svg %d (%s) has %d paths and %d texts: not a drawn plot", i, figs[i].Name, paths, texts)
		}
	}
	if len(rows) != len(d.Rows) {
		t.Errorf("%d table rows, want %d", len(rows), len(d.Rows))
	}
	for i, r := range rows {
		cells := htmlTexts(r, "td")
		if len(cells) < 3 || cells[0] != d.Rows[i].Problem || cells[1] != d.Rows[i].Filter {
			t.Errorf("row %d: cells %q, want problem %q filter %q", i, cells, d.Rows[i].Problem, d.Rows[i].Filter)
		}
	}
	if len(notes) != 2 || !strings.Contains(htmlText(notes[0]), "kf needs a linear model") {
		t.Errorf("notes: %d, want the not-applicable reason and the divergence", len(notes))
	}
	if manifest == nil {
		t.Fatal("no manifest block")
	}
	m := htmlText(manifest)
	for _, want := range []string{"20240611", d.Manifest.SuiteSHA256, "go1.26.8", "Harbour Test CPU", "2025-03-14T09:26:53Z", "estbench v0.3.0 (rev 4f1c2a9be07d)"} {
		if !strings.Contains(m, want) {
			t.Errorf("manifest block lacks %q", want)
		}
	}
	page := htmlText(doc)
	if !strings.Contains(page, `estbench run --suite 'harbour launch.toml' --runs 50`) {
		t.Errorf("the page does not show the command line, quoted for a shell")
	}
	for _, want := range []string{"Lowest RMSE: pf particles=500, 4.75", "Not applicable (see the notes): kf.", "Diverged runs (left out of the metrics): pf particles=500 (2 of 50 runs)."} {
		if !strings.Contains(page, want) {
			t.Errorf("the page lacks %q", want)
		}
	}
}

// The standalone files are what the page shows: well-formed SVG documents
// (encoding/xml) and PNG images of the figure's size at pngDPI.
func TestPlotFiles(t *testing.T) {
	path, figs := writeFixtureReport(t)
	dir := filepath.Join(filepath.Dir(path), "plots")
	entries, err := os.ReadDir(dir)
	if err != nil || len(entries) != 2*len(figs) {
		t.Fatalf("%d files in plots/, want %d (%v)", len(entries), 2*len(figs), err)
	}
	d := reportFixture()
	styles := styleIndex(d.Rows)
	for _, f := range figs {
		b, err := os.ReadFile(filepath.Join(dir, f.Name+".svg"))
		if err != nil {
			t.Fatal(err)
		}
		dec := xml.NewDecoder(bytes.NewReader(b))
		for {
			_, err := dec.Token()
			if err == io.EOF {
				break
			}
			if err != nil {
				t.Fatalf("%s.svg: %v", f.Name, err)
			}
		}
		pf, err := os.Open(filepath.Join(dir, f.Name+".png"))
		if err != nil {
			t.Fatal(err)
		}
		img, err := png.Decode(pf)
		pf.Close()
		if err != nil {
			t.Fatalf("%s.png: %v", f.Name, err)
		}
		if h := img.Bounds().Dy(); h != int(math.Round((plotHeight.Points()/72)*pngDPI)) {
			t.Errorf("%s.png is %d pixels high, want %g in at %d dpi", f.Name, h, (plotHeight.Points() / 72), pngDPI)
		}
		// Every configuration of the problem is drawn in its own colour.
		for _, r := range d.Rows {
			if r.Problem != f.Problem || !r.Applicable {
				continue
			}
			c := styleOf(styles[configKey(r.Filter, r.Config)]).colour
			if n := countNearColour(img, c, 40); n < 30 {
				t.Errorf("%s.png: %d pixels of the colour of %s %s", f.Name, n, r.Filter, r.Config)
			}
		}
	}
}

// countNear counts the pixels within tol (per channel) of c.
func countNearColour(img image.Image, c color.RGBA, tol int) int {
	n := 0
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			r, g, bl, _ := img.At(x, y).RGBA()
			if pixNear(int(r>>8), int(c.R), tol) && pixNear(int(g>>8), int(c.G), tol) && pixNear(int(bl>>8), int(c.B), tol) {
				n++
			}
		}
	}
	return n
}

func pixNear(a, b, tol int) bool { return a-b <= tol && b-a <= tol }

func htmlWalk(n *html.Node, f func(*html.Node)) {
	f(n)
	for c := n.FirstChild; c != nil; c = c.NextSibling {
		htmlWalk(c, f)
	}
}

func htmlAncestor(n *html.Node, tag string) *html.Node {
	for p := n.Parent; p != nil; p = p.Parent {
		if p.Type == html.ElementNode && p.Data == tag {
			return p
		}
	}
	return nil
}

func htmlAttr(n *html.Node, key string) string {
	for _, a := range n.Attr {
		if a.Key == key {
			return a.Val
		}
	}
	return ""
}

func htmlText(n *html.Node) string {
	var b strings.Builder
	htmlWalk(n, func(c *html.Node) {
		if c.Type == html.TextNode {
			b.WriteString(c.Data)
		}
	})
	return b.String()
}

// texts are the texts of the children of n with the given tag, in order.
func htmlTexts(n *html.Node, tag string) []string {
	var out []string
	for c := n.FirstChild; c != nil; c = c.NextSibling {
		if c.Type == html.ElementNode && c.Data == tag {
			out = append(out, strings.TrimSpace(htmlText(c)))
		}
	}
	return out
}
