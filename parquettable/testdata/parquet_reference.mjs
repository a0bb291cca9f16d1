// Reference Parquet files for the parquettable package, written and read by
// an implementation independent of the Go library: the JavaScript packages
// hyparquet-writer 0.17.0 and hyparquet 1.31.5 from the npm registry.
//
// Run from a folder where they are installed:
//
//   mkdir -p /tmp/pqjs && cd /tmp/pqjs && npm init -y >/dev/null &&
//     npm install hyparquet@1.31.5 hyparquet-writer@0.17.0
//   node /path/to/parquettable/testdata/parquet_reference.mjs          # write reference.parquet
//   node /path/to/parquettable/testdata/parquet_reference.mjs --check  # read our writer's file
//
// Writing makes reference.parquet (three row groups; nullable and required
// columns; 16-bit unsigned and 64-bit integers, floats, doubles with a
// null and a NaN, booleans, strings; the "units" metadata as parquettable
// writes it) and reference.json, the values hyparquet reads back from it.
// --check reads written_by_parquettable.parquet (made by the Go test
// TestWriterGolden with -update) with hyparquet and compares every value
// with written_by_parquettable.json.
import { createRequire } from 'node:module'
import { readFileSync, writeFileSync } from 'node:fs'
import { dirname, join } from 'node:path'
import { fileURLToPath, pathToFileURL } from 'node:url'

const here = dirname(fileURLToPath(import.meta.url))
const require = createRequire(join(process.cwd(), 'x.js'))
const load = async name => import(pathToFileURL(require.resolve(name)).href)
const { parquetReadObjects, asyncBufferFromFile, parquetMetadataAsync } = await load('hyparquet')

// JSON-ready values: 64-bit integers as decimal strings, NaN as "nan".
const plain = v => typeof v === 'bigint' ? v.toString() : (typeof v === 'number' && Number.isNaN(v)) ? 'nan' : v

async function readAll (path) {
  const file = await asyncBufferFromFile(path)
  const metadata = await parquetMetadataAsync(file)
  const rows = await parquetReadObjects({ file, utf8: true })
  return { metadata, rows }
}

async function write () {
  const { parquetWriteFile } = await load('hyparquet-writer')
  const n = 7
  const columns = {
    star_id: [1n, 2n, 9007199254740993n, -5n, 0n, 9223372036854775807n, 42n],
    period_d: [12.5, 0.75, null, 33.0, NaN, 45.25, 2.0],
    color: [0.5, 1.25, 2.0, 0.75, 1.5, 3.0, -0.25],
    field: [7, null, -3, 2147483647, -2147483648, 0, 11],
    u16: [0, 1, 32767, 32768, 65535, 40000, 7],
    detected: [true, false, null, true, false, true, false],
    name: ['alpha', null, '', 'with space', "it's", 'ünïcode', 'twelve chars'],
  }
  const schema = [
    { name: 'root', num_children: 7 },
    { name: 'star_id', type: 'INT64', repetition_type: 'REQUIRED' },
    { name: 'period_d', type: 'DOUBLE', repetition_type: 'OPTIONAL' },
    { name: 'color', type: 'FLOAT', repetition_type: 'REQUIRED' },
    { name: 'field', type: 'INT32', repetition_type: 'OPTIONAL' },
    // The deprecated converted type: this hyparquet-writer writes the INTEGER
    // logical type's bit width with the wrong thrift type (i32, not i8).
    { name: 'u16', type: 'INT32', repetition_type: 'REQUIRED', converted_type: 'UINT_16' },
    { name: 'detected', type: 'BOOLEAN', repetition_type: 'OPTIONAL' },
    { name: 'name', type: 'BYTE_ARRAY', repetition_type: 'OPTIONAL', converted_type: 'UTF8', logical_type: { type: 'STRING' } },
  ]
  const path = join(here, 'reference.parquet')
  parquetWriteFile({
    filename: path,
    schema,
    columnData: Object.entries(columns).map(([name, data]) => ({ name, data })),
    rowGroupSize: 3,
    kvMetadata: [{ key: 'units', value: JSON.stringify({ period_d: 'd', color: 'mag' }) }],
    createdBy: 'parquet_reference.mjs',
  })
  const { metadata, rows } = await readAll(path)
  const out = {
    source: 'hyparquet-writer 0.17.0, read back by hyparquet 1.31.5 (parquettable/testdata/parquet_reference.mjs)',
    rows: n,
    row_groups: metadata.row_groups.length,
    columns: Object.keys(columns),
    values: rows.map(r => Object.keys(columns).map(k => plain(r[k]))),
  }
  writeFileSync(join(here, 'reference.json'), JSON.stringify(out, null, 1) + '\n')
  console.log(`wrote reference.parquet (${n} rows, ${metadata.row_groups.length} row groups) and reference.json`)
}

async function check () {
  const want = JSON.parse(readFileSync(join(here, 'written_by_parquettable.json'), 'utf8'))
  const { metadata, rows } = await readAll(join(here, 'written_by_parquettable.parquet'))
  const names = metadata.schema.slice(1).map(s => s.name)
  const same = (a, b) => JSON.stringify(a) === JSON.stringify(b)
  if (!same(names, want.columns.map(c => c.name))) throw new Error(`columns ${names} != ${want.columns.map(c => c.name)}`)
  const units = JSON.parse(metadata.key_value_metadata.find(kv => kv.key === 'units').value)
  for (const c of want.columns) {
    if ((units[c.name] ?? '') !== c.unit) throw new Error(`unit of ${c.name}: ${units[c.name]} != ${c.unit}`)
  }
  if (rows.length !== want.rows.length) throw new Error(`${rows.length} rows, want ${want.rows.length}`)
  rows.forEach((r, j) => want.columns.forEach((c, k) => {
    let got = plain(r[c.name])
    let w = want.rows[j][k]
    if (c.type === 'float32' && typeof w === 'number') w = Math.fround(w)
    if (c.type === 'int32' && typeof w === 'string') w = Number(w)
    if (got !== w && !(got === null && w === null)) throw new Error(`row ${j + 1} ${c.name}: ${got} != ${w}`)
  }))
  console.log(`hyparquet reads written_by_parquettable.parquet back: ${rows.length} rows, ${want.columns.length} columns, ${metadata.row_groups.length} row groups, all equal`)
}

if (process.argv.includes('--check')) await check()
else await write()
