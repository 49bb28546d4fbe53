package results

import (
	"bytes"
	"math"
	"strings"
	"testing"

	"github.com/estbench/estbench/metrics"
)

// The rule under test is the project's own (DEVELOPERS.md, Output): at least
// three significant digits, one scale per column. The expected values are
// worked by hand from it; there is no outside source for a layout.
func TestDecimalsFor(t *testing.T) {
	for _, tc := range []struct {
		m    float64
		want int
	}{
		{412.7, 0}, {1000, 0}, {99.9, 1}, {4.7, 2}, {1, 2}, {0.9453, 3},
		{0.001, 5}, {0.000123, 6}, {1e-9, maxDecimals}, {0, 0}, {123456, 0},
	} {
		if got := decimalsFor(tc.m); got != tc.want {
			t.Errorf("decimalsFor(%v) = %d, want %d", tc.m, got, tc.want)
		}
	}
}

func TestColumnScales(t *testing.T) {
	for _, tc := range []struct {
		name  string
		sc    scale
		vals  []float64
		label string
		want  []string
	}{
		{"plain", magnitudeScale([]float64{0.5, 0.61, nan}), []float64{0.5, 0.61, nan}, "", []string{"0.500", "0.610", "-"}},
		{"small", magnitudeScale([]float64{2e-5, 3.25e-5}), []float64{2e-5, 3.25e-5}, "×1e-6", []string{"20.0", "32.5"}},
		{"large", magnitudeScale([]float64{1.2e5, 3.4e5}), []float64{1.2e5, 3.4e5}, "×1e3", []string{"120", "340"}},
		{"wide", magnitudeScale([]float64{1.23e-4, 14.9}), []float64{1.23e-4, 14.9}, "", []string{"1.23e-04", "1.49e+01"}},
		{"zeros", magnitudeScale([]float64{0, 0}), []float64{0}, "", []string{"0"}},
		{"ns", timeScale([]float64{412.7, 241300}), []float64{412.7, 241300}, "ns", []string{"413", "241300"}},
		{"µs", timeScale([]float64{2500, 1.2e6}), []float64{2500, 1.2e6}, "µs", []string{"2.50", "1200.00"}},
		{"s", timeScale([]float64{3.21e9}), []float64{3.21e9}, "s", []string{"3.21"}},
		{"no times", timeScale(nil), nil, "ns", nil},
	} {
		if tc.sc.label != tc.label {
			t.Errorf("%s: label %q, want %q", tc.name, tc.sc.label, tc.label)
		}
		for i, v := range tc.vals {
			if got := tc.sc.format(v); got != tc.want[i] {
				t.Errorf("%s: format(%v) = %q, want %q", tc.name, v, got, tc.want[i])
			}
		}
	}
}

func TestBoundsMark(t *testing.T) {
	sc := scale{div: 1, decimals: 2}
	for _, tc := range []struct {
		v, lo, hi float64
		want      string
	}{
		{2.03, 1.87, 2.15, "2.03 [1.87, 2.15] in"},
		{2.15, 1.87, 2.15, "2.15 [1.87, 2.15] in"}, // the bounds belong to the acceptance interval
		{2.5, 1.87, 2.15, "2.50 [1.87, 2.15] high"},
		{1.5, 1.87, 2.15, "1.50 [1.87, 2.15] low"},
		{1.5, nan, nan, "1.50"},
		{nan, 1.87, 2.15, "-"},
	} {
		if got := withBounds(sc, tc.v, tc.lo, tc.hi); got != tc.want {
			t.Errorf("withBounds(%v, %v, %v) = %q, want %q", tc.v, tc.lo, tc.hi, got, tc.want)
		}
	}
}

// LaTeX's special characters are # $ % & ~ _ ^ \ { } (Lamport 1994, "LaTeX:
// A Document Preparation System", 2nd ed.; the list is recalled from
// memory); markdown pipe tables end a cell at an unescaped | (GitHub
// Flavored Markdown Spec 0.29-gfm, 2019, §4.10 "Tables (extension)").
func TestEscaping(t *testing.T) {
	if got := texEscape(`a_b 95% $x$ #1 & {c} ~^\ µs ×1e-6`); got !=
		`a\_b 95\% \$x\$ \#1 \& \{c\} \textasciitilde{}\textasciicircum{}\textbackslash{} $\mu$s $\times$1e-6` {
		t.Errorf("texEscape: %s", got)
	}
	rows := []SummaryRow{{Problem: "[odd]", Filter: "ukf", Config: "a|b=1", Applicable: true,
		Summary: metrics.Summary{Runs: 1, RMSE: 1, RMSELo: nan, RMSEHi: nan, ANEES: 1, ANEESLo: nan, ANEESHi: nan,
			ANIS: nan, ANISLo: nan, ANISHi: nan, NEESInBounds: 1, NsPerStep: 10}}}
	var md, tex bytes.Buffer
	if err := WriteSummary(&md, "markdown", rows, Provenance{}); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(md.String(), `| a\|b=1 |`) {
		t.Errorf("markdown did not escape |:\n%s", md.String())
	}
	if err := WriteSummary(&tex, "latex", rows, Provenance{}); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(tex.String(), "\\midrule\n{}[odd] & ukf") {
		t.Errorf("latex row starting with [ not protected:\n%s", tex.String())
	}
	if strings.Contains(tex.String(), "caption") || strings.Contains(md.String(), "Provenance") {
		t.Error("zero Provenance printed")
	}
}

// A consistency column takes its scale from the bounds; one value far above
// them (a collapsed particle cloud) is shown alone in e-notation instead of
// turning the whole column into e-notation.
func TestConsistencyColumnOutlier(t *testing.T) {
	rows := []SummaryRow{
		{Problem: "ungm", Filter: "ukf", Applicable: true, Summary: metrics.Summary{Runs: 30, ANEES: 1.951, ANEESLo: 0.950, ANEESHi: 1.051, ANIS: math.NaN(), ANISLo: math.NaN(), ANISHi: math.NaN(), RMSE: 7.8, RMSELo: 7.5, RMSEHi: 8.1, NsPerStep: 600}},
		{Problem: "ungm", Filter: "pf", Applicable: true, Summary: metrics.Summary{Runs: 30, ANEES: 6.63e13, ANEESLo: 0.950, ANEESHi: 1.051, ANEESRunMedian: 1.02, ANIS: math.NaN(), ANISLo: math.NaN(), ANISHi: math.NaN(), RMSE: 4.7, RMSELo: 4.3, RMSEHi: 5.2, NsPerStep: 16000}},
	}
	h := buildHuman(rows, Provenance{})
	if got := h.cells[0][hANEES]; got != "1.951 [0.950, 1.051] high" {
		t.Errorf("ukf cell %q", got)
	}
	if got := h.cells[1][hANEES]; got != "6.63e+13 [0.950, 1.051] high" {
		t.Errorf("pf cell %q", got)
	}
	// The median run ANEES, which the collapsed runs do not move, keeps the
	// scale of the bounds.
	if got := h.cells[1][hANEESMed]; got != "1.020" {
		t.Errorf("pf median run ANEES cell %q", got)
	}
}
