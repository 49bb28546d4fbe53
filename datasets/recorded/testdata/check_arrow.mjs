// Reads an estbench recording with apache-arrow (the JavaScript Arrow
// implementation, from the npm registry), which shares no code with
// arrow-go, and prints what it finds as JSON: schema metadata, and per
// field its type, nullability, metadata, null count, validity and the bits
// of every value as hex. Used by TestArrowIndependentReader; run by hand as
//
//   node check_arrow.mjs <apache-arrow package folder> <file.arrow>
import { readFileSync } from 'node:fs'
import { join } from 'node:path'
import { pathToFileURL } from 'node:url'

const [pkg, file] = process.argv.slice(2)
const arrow = await import(pathToFileURL(join(pkg, 'Arrow.node.mjs')).href)
const table = arrow.tableFromIPC(readFileSync(file))
const out = { rows: table.numRows, metadata: Object.fromEntries(table.schema.metadata), fields: [] }
for (const [i, f] of table.schema.fields.entries()) {
  const col = table.getChildAt(i)
  const bits = [], valid = []
  for (const d of col.data) {
    const dv = new DataView(d.values.buffer, d.values.byteOffset, d.values.byteLength)
    for (let j = 0; j < d.length; j++) {
      bits.push(dv.getBigUint64(8 * j, true).toString(16).padStart(16, '0'))
      valid.push(d.getValid(j))
    }
  }
  out.fields.push({
    name: f.name, type: String(f.type), nullable: f.nullable,
    metadata: Object.fromEntries(f.metadata), nulls: col.nullCount, valid, bits,
  })
}
console.log(JSON.stringify(out))
