package results

import (
	"io"
	"strconv"
	"strings"
)

// writeMarkdown writes a pipe table, then the notes as a numbered list
// matching the [n] references, the legend and the provenance.
func writeMarkdown(w io.Writer, h *human) error {
	var b strings.Builder
	mdRow(&b, h.head)
	b.WriteByte('|')
	for _, r := range h.right {
		if r {
			b.WriteString(" ---: |")
		} else {
			b.WriteString(" :--- |")
		}
	}
	b.WriteByte('\n')
	for _, c := range h.cells {
		mdRow(&b, c)
	}
	if len(h.notes) > 0 {
		b.WriteString("\nNotes:\n\n")
		for i, n := range h.notes {
			b.WriteString(strconv.Itoa(i+1) + ". " + n + "\n")
		}
	}
	if h.legend {
		b.WriteString("\n" + legend + "\n")
	}
	if h.prov != "" {
		b.WriteString("\nProvenance: " + h.prov + "\n")
	}
	_, err := io.WriteString(w, b.String())
	return err
}

func mdRow(b *strings.Builder, cells []string) {
	b.WriteByte('|')
	for _, c := range cells {
		b.WriteString(" " + strings.ReplaceAll(c, "|", `\|`) + " |")
	}
	b.WriteByte('\n')
}
