// Package results turns the rows of a finished suite into files and tables:
// a summary table in five formats (Formats), Parquet files of the summary,
// of every run and of the per-step curves, summary.md and manifest.json.
//
// It also reads result folders back: Compare matches two of them row by
// row (the regression gate; pairing, intervals and verdict rules are in
// its documentation) and WriteComparison shows the result; Budget chooses,
// per problem, from the accuracy/cost front of one folder under a budget
// per step in ns or model evaluations, and WriteBudget shows it. Their
// json keys (CompareColumns, and the fields listed in WriteBudget) are
// part of the contract, as the columns are.
//
// # Columns
//
// The summary columns (SummaryColumns), the run columns (RunColumns) and
// the curve columns (CurveColumns) are the public contract of the CSV, JSON
// and Parquet files: names and order do not change without a new name.
//
// # Numbers
//
// Programs get exact float64: CSV writes strconv 'g' -1 (which parses back
// to the same bits), JSON writes the same digits, Parquet stores DOUBLE. A
// metric that is NaN is null in JSON and Parquet and an empty cell in CSV;
// ±Inf is null in JSON (which has no infinities), "+Inf"/"-Inf" in CSV and
// kept as a value in Parquet.
//
// People get scaled numbers (table, markdown, latex): one scale per column
// (time per step in ns, µs, ms or s; a power-of-ten factor in the header
// when a column's magnitude is far from 1), decimals chosen from the
// column's smallest nonzero value so that it keeps three significant digits
// (at most six decimals), "-" where a value is missing. A column whose
// nonzero values span a factor of 1e4 or more is in e-notation with three
// significant digits instead. ANEES and ANIS stand beside their 95% bounds
// and a mark saying whether they are inside them (in, high, low), with a
// legend under the table. Notes (why a pair did not apply) and warnings are
// numbered footnotes under the table; identical texts share one number.
//
// # Files
//
// Every file is written to a temporary file in the target's directory,
// synced and renamed into place (WriteFileAtomic); on any error the
// temporary file is removed and the target is left as it was. The Parquet
// writers stream: a row is copied into fixed-size column buffers and not
// kept, buffers are written out every batchRows rows, and a row group is
// closed every rowGroupRows rows, so memory does not grow with the rows.
//
// # Errors
//
// Writers return errors (I/O, an unknown format); readers return errors
// naming the file and the column. Library code here never prints.
package results
