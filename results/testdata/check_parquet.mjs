// Reads estbench's Parquet files with hyparquet, a second, independent
// Parquet implementation (JavaScript, from the npm registry), and compares
// them with the values the Go test expected. Used by
// TestParquetIndependentReader; run by hand as
//
//   node check_parquet.mjs <hyparquet package folder> <folder with the files and expected.json>
//
// Prints "ok" and exits 0 when every file matches, else lists the
// differences and exits 1.
import { readFileSync } from 'node:fs'
import { join } from 'node:path'
import { pathToFileURL } from 'node:url'

const [pkg, dir] = process.argv.slice(2)
const meta = JSON.parse(readFileSync(join(pkg, 'package.json'), 'utf8'))
// The package's Node entry: exports["."] under the node (or default)
// condition, import (or default) within it; main otherwise.
const pick = e => typeof e === 'string' ? e : e && pick(e.node ?? e.default ?? e.import)
const entry = pick(meta.exports?.['.']) ?? meta.main
const hp = await import(pathToFileURL(join(pkg, entry)).href)

const expected = JSON.parse(readFileSync(join(dir, 'expected.json'), 'utf8'))
const errors = []
for (const [name, want] of Object.entries(expected)) {
  const file = await hp.asyncBufferFromFile(join(dir, name))
  const md = await hp.parquetMetadataAsync(file)
  const cols = md.schema.slice(1).map(s => s.name)
  if (cols.join(',') !== want.columns.join(',')) {
    errors.push(`${name}: columns ${cols} want ${want.columns}`)
    continue
  }
  const rows = await hp.parquetReadObjects({ file })
  if (rows.length !== want.rows.length) {
    errors.push(`${name}: ${rows.length} rows want ${want.rows.length}`)
    continue
  }
  rows.forEach((row, i) => {
    want.columns.forEach((c, j) => {
      let got = row[c]
      if (typeof got === 'bigint') got = Number(got)
      if (got === undefined) got = null
      const w = want.rows[i][j]
      if (!Object.is(got, w) && errors.length < 20) {
        errors.push(`${name} row ${i} ${c}: ${got} want ${w}`)
      }
    })
  })
}
if (errors.length > 0) {
  console.log(errors.join('\n'))
  process.exit(1)
}
console.log('ok')
