package results

import (
	"io"
	"strings"
)

// writeLaTeX writes a table environment with a booktabs tabular (it needs
// \usepackage{booktabs}), the notes and legend in a footnote-size block
// under it, and the provenance as the caption.
func writeLaTeX(w io.Writer, h *human) error {
	var f texFrame
	if h.prov != "" {
		f.caption = "estbench results: " + h.prov + "."
	}
	return writeLaTeXFramed(w, h, f)
}

// texFrame is what surrounds a LaTeX tabular besides the table rows: the
// caption and label, and lines set in the footnote-size block after the
// notes and the legend. Texts are plain and escaped when written.
type texFrame struct {
	caption string   // "" for none
	label   string   // \label key; "" for none
	footer  []string // lines after the notes and legend
}

func writeLaTeXFramed(w io.Writer, h *human, f texFrame) error {
	var b strings.Builder
	b.WriteString("\\begin{table}[htbp]\n\\centering\n\\small\n\\begin{tabular}{")
	for _, r := range h.right {
		if r {
			b.WriteByte('r')
		} else {
			b.WriteByte('l')
		}
	}
	b.WriteString("}\n\\toprule\n")
	texRow(&b, h.head)
	b.WriteString("\\midrule\n")
	for _, c := range h.cells {
		texRow(&b, c)
	}
	b.WriteString("\\bottomrule\n\\end{tabular}\n")
	if len(h.notes) > 0 || h.legend || len(f.footer) > 0 {
		b.WriteString("\n\\smallskip\n{\\footnotesize\n")
		for i, n := range h.notes {
			b.WriteString(texEscape(noteRef(i)+" "+n) + "\\par\n")
		}
		if h.legend {
			b.WriteString(texEscape(legend) + "\\par\n")
		}
		for _, l := range f.footer {
			b.WriteString(texEscape(l) + "\\par\n")
		}
		b.WriteString("}\n")
	}
	if f.caption != "" {
		b.WriteString("\\caption{" + texEscape(f.caption) + "}\n")
	}
	if f.label != "" {
		b.WriteString("\\label{" + f.label + "}\n")
	}
	b.WriteString("\\end{table}\n")
	_, err := io.WriteString(w, b.String())
	return err
}

func texRow(b *strings.Builder, cells []string) {
	for i, c := range cells {
		if i > 0 {
			b.WriteString(" & ")
		}
		if c == missing {
			b.WriteString("--")
			continue
		}
		if i == 0 && strings.HasPrefix(c, "[") {
			b.WriteString("{}") // else \\ of the previous row reads [..] as its argument
		}
		b.WriteString(texEscape(c))
	}
	b.WriteString(" \\\\\n")
}

// texReplacer escapes LaTeX's special characters and writes the few
// non-ASCII symbols of our tables in math mode.
var texReplacer = strings.NewReplacer(
	`\`, `\textbackslash{}`,
	`&`, `\&`, `%`, `\%`, `$`, `\$`, `#`, `\#`, `_`, `\_`, `{`, `\{`, `}`, `\}`,
	`~`, `\textasciitilde{}`, `^`, `\textasciicircum{}`,
	`<`, `\textless{}`, `>`, `\textgreater{}`,
	`µ`, `$\mu$`, `×`, `$\times$`,
)

func texEscape(s string) string { return texReplacer.Replace(s) }
