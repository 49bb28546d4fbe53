package results

import (
	"bytes"
	"io"
	"strings"

	"github.com/olekukonko/tablewriter"
	"github.com/olekukonko/tablewriter/renderer"
	"github.com/olekukonko/tablewriter/tw"
)

// This is the one file of estbench that imports tablewriter.

// writeTerminal writes the table for a terminal: no frame, one rule under
// the header, columns two spaces apart, then the notes, the legend and the
// provenance.
func writeTerminal(w io.Writer, h *human) error {
	align := make([]tw.Align, len(h.head))
	for i, r := range h.right {
		align[i] = tw.AlignLeft
		if r {
			align[i] = tw.AlignRight
		}
	}
	none := tw.Border{Left: tw.Off, Right: tw.Off, Top: tw.Off, Bottom: tw.Off}
	var tab bytes.Buffer
	t := tablewriter.NewTable(&tab,
		tablewriter.WithRenderer(renderer.NewBlueprint(tw.Rendition{
			Borders: none,
			Symbols: tw.NewSymbols(tw.StyleLight),
			Settings: tw.Settings{
				Separators: tw.Separators{BetweenRows: tw.Off, BetweenColumns: tw.Off},
				Lines:      tw.Lines{ShowHeaderLine: tw.On},
			},
		})),
		tablewriter.WithHeaderAutoFormat(tw.Off),
		tablewriter.WithHeaderAutoWrap(tw.WrapNone),
		tablewriter.WithRowAutoWrap(tw.WrapNone),
		tablewriter.WithHeaderAlignmentConfig(tw.CellAlignment{PerColumn: align}),
		tablewriter.WithRowAlignmentConfig(tw.CellAlignment{PerColumn: align}),
		tablewriter.WithTrimSpace(tw.Off),
	)
	t.Header(h.head)
	for _, c := range h.cells {
		if err := t.Append(c); err != nil {
			return err
		}
	}
	if err := t.Render(); err != nil {
		return err
	}
	var b strings.Builder
	for line := range strings.Lines(tab.String()) {
		b.WriteString(strings.TrimRight(line, " \n") + "\n")
	}
	if len(h.notes) > 0 || h.legend || h.prov != "" {
		b.WriteByte('\n')
	}
	for i, n := range h.notes {
		b.WriteString(noteRef(i) + " " + n + "\n")
	}
	if h.legend {
		b.WriteString(legend + "\n")
	}
	if h.prov != "" {
		b.WriteString(h.prov + "\n")
	}
	_, err := io.WriteString(w, b.String())
	return err
}
