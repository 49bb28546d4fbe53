package results

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"io"
	"math"
	"strconv"
)

// writeCSV writes a header of SummaryColumns and one record per row
// (RFC 4180 quoting, as encoding/csv does). Floats are strconv 'g' -1,
// which parses back to the same float64; NaN is an empty cell.
func writeCSV(w io.Writer, rows []SummaryRow) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(SummaryColumns); err != nil {
		return err
	}
	rec := make([]string, len(SummaryColumns))
	for i := range rows {
		r := &rows[i]
		runs, div := summaryCounts(r)
		rec[0], rec[1], rec[2] = r.Problem, r.Filter, r.Config
		rec[3], rec[4] = strconv.Itoa(runs), strconv.Itoa(div)
		for j, v := range summaryValues(r) {
			rec[5+j] = ""
			if !math.IsNaN(v) {
				rec[5+j] = strconv.FormatFloat(v, 'g', -1, 64)
			}
		}
		rec[len(rec)-1] = noteOf(r)
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// writeJSON writes an array with one object per row, one object per line,
// keys in the order of SummaryColumns. Floats are the shortest decimal that
// parses back to the same float64; NaN and ±Inf are null.
func writeJSON(w io.Writer, rows []SummaryRow) error {
	var b []byte
	b = append(b, '[')
	for i := range rows {
		r := &rows[i]
		if i > 0 {
			b = append(b, ',')
		}
		b = append(b, "\n  {"...)
		runs, div := summaryCounts(r)
		vals := summaryValues(r)
		for j, col := range SummaryColumns {
			if j > 0 {
				b = append(b, ',')
			}
			b = appendJSONString(b, col)
			b = append(b, ':')
			switch {
			case j == 0:
				b = appendJSONString(b, r.Problem)
			case j == 1:
				b = appendJSONString(b, r.Filter)
			case j == 2:
				b = appendJSONString(b, r.Config)
			case j == 3:
				b = strconv.AppendInt(b, int64(runs), 10)
			case j == 4:
				b = strconv.AppendInt(b, int64(div), 10)
			case j == len(SummaryColumns)-1:
				b = appendJSONString(b, noteOf(r))
			default:
				v := vals[j-5]
				if math.IsNaN(v) || math.IsInf(v, 0) {
					b = append(b, "null"...)
				} else {
					b = strconv.AppendFloat(b, v, 'g', -1, 64)
				}
			}
		}
		b = append(b, '}')
	}
	if len(rows) > 0 {
		b = append(b, '\n')
	}
	b = append(b, "]\n"...)
	_, err := w.Write(b)
	return err
}

// appendJSONString appends s as a JSON string, without HTML escaping.
func appendJSONString(b []byte, s string) []byte {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	enc.Encode(s) // a string always encodes
	return append(b, bytes.TrimSuffix(buf.Bytes(), []byte{'\n'})...)
}
