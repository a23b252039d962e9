import { useRef, useState } from 'preact/hooks'
import { describeError, request } from '../api'
import { DELIMITER_CHARS, guessColumn, guessDecimalSeparator, guessDelimiter, parseRows, type DecimalSeparator, type Delimiter } from '../csv'
import { formatNumber } from '../format'
import { Icon } from '../icons'
import { Link, hrefs } from '../router'
import type { UploadReport } from '../types'

const PREVIEW_ROWS = 10
/** Bytes read for the preview; the upload sends the whole file. */
const PREVIEW_BYTES = 64 * 1024

const ROLES = [
  { key: 'sku', label: 'SKU', param: 'skuColumn', names: ['sku', 'item', 'article', 'product'] },
  { key: 'period', label: 'Period', param: 'periodColumn', names: ['period', 'date', 'week', 'month', 'day'] },
  { key: 'demand', label: 'Demand', param: 'demandColumn', names: ['demand', 'quantity', 'qty', 'units', 'sales'] },
] as const
type Role = (typeof ROLES)[number]['key']
/** Header names taken for the optional tags column (tags separated by |). */
const TAG_COLUMN_NAMES = ['tags', 'labels']

interface Preview {
  readonly file: File
  readonly delimiter: Delimiter
  readonly decimalSeparator: DecimalSeparator
  readonly header: string[]
  readonly rows: string[][]
}

export function Upload() {
  const [preview, setPreview] = useState<Preview | null>(null)
  const [mapping, setMapping] = useState<Record<Role, number>>({ sku: -1, period: -1, demand: -1 })
  // -1: no tags column.
  const [tagsColumn, setTagsColumn] = useState(-1)
  const [frequency, setFrequency] = useState('month')
  // '' leaves the mode to the rows: dated rows are added, period rows overwrite.
  const [mode, setMode] = useState('')
  const [duplicates, setDuplicates] = useState('sum')
  const [dragging, setDragging] = useState(false)
  const [problem, setProblem] = useState('')
  const [busy, setBusy] = useState(false)
  const [report, setReport] = useState<UploadReport | null>(null)
  const reportHeading = useRef<HTMLHeadingElement>(null)

  const readFile = async (file: File, delimiter?: Delimiter) => {
    setReport(null)
    setProblem('')
    const text = await file.slice(0, PREVIEW_BYTES).text()
    const d = delimiter ?? guessDelimiter(text)
    const [header, ...rows] = parseRows(text, DELIMITER_CHARS[d], PREVIEW_ROWS + 1)
    if (!header || header.length === 0) {
      setPreview(null)
      setProblem(`${file.name} has no header row.`)
      return
    }
    setPreview({ file, delimiter: d, decimalSeparator: guessDecimalSeparator(rows, d), header, rows })
    setTagsColumn(guessColumn(header, TAG_COLUMN_NAMES))
    setMapping({
      sku: guessColumn(header, ROLES[0].names),
      period: guessColumn(header, ROLES[1].names),
      demand: guessColumn(header, ROLES[2].names),
    })
  }

  const onDrop = (e: DragEvent) => {
    e.preventDefault()
    setDragging(false)
    const file = e.dataTransfer?.files[0]
    if (file) void readFile(file)
  }

  const missing = ROLES.filter((r) => mapping[r.key] < 0).map((r) => r.label)
  const chosen = [...Object.values(mapping), tagsColumn].filter((i) => i >= 0)
  const clash = new Set(chosen).size < chosen.length

  const onUpload = async (e: Event) => {
    e.preventDefault()
    if (!preview) return
    if (missing.length > 0 || clash) {
      setProblem(missing.length > 0 ? `Choose a column for ${missing.join(', ')}.` : 'Choose a different column for each role.')
      return
    }
    setBusy(true)
    setProblem('')
    const q = new URLSearchParams({ frequency, duplicates, delimiter: preview.delimiter, decimalSeparator: preview.decimalSeparator })
    if (mode !== '') q.set('mode', mode)
    if (tagsColumn >= 0) q.set('tagsColumn', preview.header[tagsColumn]!.trim())
    for (const r of ROLES) q.set(r.param, preview.header[mapping[r.key]]!.trim())
    try {
      const answer = await request<UploadReport>(`/v1/history?${q}`, { method: 'POST', body: preview.file, contentType: 'text/csv' })
      if (!answer.notModified) setReport(answer.body)
      requestAnimationFrame(() => reportHeading.current?.focus())
    } catch (err) {
      setProblem(`The upload was refused: ${describeError(err)}`)
    } finally {
      setBusy(false)
    }
  }

  const roleOf = (col: number): { readonly label: string } | undefined =>
    ROLES.find((r) => mapping[r.key] === col) ?? (col === tagsColumn ? { label: 'Tags' } : undefined)
  return (
    <>
      <h1 tabIndex={-1}>Upload histories</h1>
      <p>
        A CSV file in long layout: one row per SKU and period (a date or a label such as 2025-03, 2025-W09, 2025-Q2), with its
        demand, and optionally a column of tags separated by | (category:garden|site:north). Rows are summed into the chosen
        frequency. Nothing is stored until you press Upload.
      </p>
      <div
        class={`dropzone ${dragging ? 'dragging' : ''}`}
        data-testid="dropzone"
        onDragOver={(e) => {
          e.preventDefault()
          setDragging(true)
        }}
        onDragLeave={() => setDragging(false)}
        onDrop={onDrop}
      >
        <Icon name="upload" />
        <p>Drop a CSV file here, or</p>
        <label class="button" for="upload-file">
          Choose a file
        </label>
        <input
          id="upload-file"
          class="file-input"
          type="file"
          accept=".csv,text/csv,text/plain"
          onChange={(e) => {
            const file = (e.target as HTMLInputElement).files?.[0]
            if (file) void readFile(file)
          }}
        />
        {preview ? (
          <p class="small">
            Chosen: <strong>{preview.file.name}</strong> ({formatNumber(preview.file.size / 1024)} KB)
          </p>
        ) : null}
      </div>

      {preview ? (
        <form onSubmit={(event) => void onUpload(event)} aria-labelledby="mapping-heading">
          <h2 id="mapping-heading">Columns and settings</h2>
          <div class="filters">
            {ROLES.map((r) => (
              <div class="field" key={r.key}>
                <label for={`map-${r.key}`}>{r.label} column</label>
                <select
                  id={`map-${r.key}`}
                  value={String(mapping[r.key])}
                  onChange={(e) => setMapping({ ...mapping, [r.key]: Number((e.target as HTMLSelectElement).value) })}
                >
                  <option value="-1">(choose)</option>
                  {preview.header.map((h, i) => (
                    <option key={i} value={String(i)}>
                      {h || `column ${i + 1}`}
                    </option>
                  ))}
                </select>
              </div>
            ))}
            <div class="field">
              <label for="upload-delimiter">Separator</label>
              <select id="upload-delimiter" value={preview.delimiter} onChange={(e) => void readFile(preview.file, (e.target as HTMLSelectElement).value as Delimiter)}>
                <option value="comma">comma ,</option>
                <option value="semicolon">semicolon ;</option>
                <option value="tab">tab</option>
              </select>
            </div>
            <div class="field">
              <label for="upload-decimal">Decimal mark</label>
              <select
                id="upload-decimal"
                value={preview.decimalSeparator}
                onChange={(e) => setPreview({ ...preview, decimalSeparator: (e.target as HTMLSelectElement).value as DecimalSeparator })}
              >
                <option value="point">point 1.5</option>
                {/* A comma cannot mark decimals in a comma-separated file. */}
                <option value="comma" disabled={preview.delimiter === 'comma'}>
                  comma 1,5
                </option>
              </select>
            </div>
            <div class="field">
              <label for="upload-tags">Tags column</label>
              <select id="upload-tags" value={String(tagsColumn)} onChange={(e) => setTagsColumn(Number((e.target as HTMLSelectElement).value))}>
                <option value="-1">(none)</option>
                {preview.header.map((h, i) => (
                  <option key={i} value={String(i)}>
                    {h || `column ${i + 1}`}
                  </option>
                ))}
              </select>
            </div>
            <div class="field">
              <label for="upload-frequency">Frequency</label>
              <select id="upload-frequency" value={frequency} onChange={(e) => setFrequency((e.target as HTMLSelectElement).value)}>
                {['day', 'week', 'month', 'quarter', 'year'].map((f) => (
                  <option key={f} value={f}>
                    {f}
                  </option>
                ))}
              </select>
            </div>
            <div class="field">
              <label for="upload-mode">Stored histories</label>
              <select id="upload-mode" value={mode} onChange={(e) => setMode((e.target as HTMLSelectElement).value)}>
                <option value="">as the rows say: dates add to periods, period rows overwrite</option>
                <option value="add">add to the periods sent</option>
                <option value="overwrite">overwrite the periods sent</option>
                <option value="replace">replace each SKU’s whole history</option>
              </select>
            </div>
            <div class="field">
              <label for="upload-duplicates">Several rows per period</label>
              <select id="upload-duplicates" value={duplicates} onChange={(e) => setDuplicates((e.target as HTMLSelectElement).value)}>
                <option value="sum">add them up</option>
                <option value="last">keep the last</option>
              </select>
            </div>
          </div>

          <h2 id="preview-heading">First rows</h2>
          <div class="table-wrap">
            <table class="data preview" data-testid="upload-preview" aria-labelledby="preview-heading">
              <thead>
                <tr>
                  <th scope="col" class="num">
                    Line
                  </th>
                  {preview.header.map((h, i) => {
                    const role = roleOf(i)
                    return (
                      <th key={i} scope="col" class={role ? 'mapped' : ''}>
                        {h || `column ${i + 1}`}
                        {role ? <span class="role-badge">{role.label}</span> : null}
                      </th>
                    )
                  })}
                </tr>
              </thead>
              <tbody>
                {preview.rows.map((row, r) => (
                  <tr key={r}>
                    <td class="num">{r + 2}</td>
                    {preview.header.map((_, i) => (
                      <td key={i} class={roleOf(i) ? 'mapped' : ''}>
                        {row[i] ?? ''}
                      </td>
                    ))}
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
          {problem ? (
            <p class="error" role="alert">
              {problem}
            </p>
          ) : null}
          <button type="submit" class="primary" disabled={busy}>
            {busy ? 'Uploading…' : `Upload ${preview.file.name}`}
          </button>
        </form>
      ) : problem ? (
        <p class="error" role="alert">
          {problem}
        </p>
      ) : null}

      {report ? (
        <section aria-labelledby="report-heading" data-testid="upload-report">
          <h2 id="report-heading" tabIndex={-1} ref={reportHeading}>
            Upload report
          </h2>
          <dl class="figures">
            <div>
              <dt>Rows accepted</dt>
              <dd data-testid="rows-accepted">{formatNumber(report.rows.accepted)}</dd>
            </div>
            <div class={report.rows.rejected > 0 ? 'figure-alert' : ''}>
              <dt>Rows rejected</dt>
              <dd data-testid="rows-rejected">{formatNumber(report.rows.rejected)}</dd>
            </div>
            <div>
              <dt>SKUs created</dt>
              <dd>{formatNumber(report.skus.created)}</dd>
            </div>
            <div>
              <dt>SKUs updated</dt>
              <dd>{formatNumber(report.skus.updated)}</dd>
            </div>
            <div>
              <dt>SKUs rejected</dt>
              <dd>{formatNumber(report.skus.rejected)}</dd>
            </div>
          </dl>
          {report.errors.length > 0 ? (
            <div class="table-wrap">
              <table class="data" data-testid="upload-errors">
                <caption>Rejected rows{report.errorsNotListed > 0 ? ` (${formatNumber(report.errorsNotListed)} more not listed)` : ''}</caption>
                <thead>
                  <tr>
                    <th scope="col" class="num">
                      Line
                    </th>
                    <th scope="col">Column</th>
                    <th scope="col">SKU</th>
                    <th scope="col">Reason</th>
                  </tr>
                </thead>
                <tbody>
                  {report.errors.map((e, i) => (
                    <tr key={i}>
                      <td class="num">{e.line ?? e.item ?? ''}</td>
                      <td>{e.column ?? ''}</td>
                      <td class="mono">{e.sku ?? ''}</td>
                      <td>{e.reason}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
          ) : (
            <p>Every row was accepted.</p>
          )}
          <p>
            <Link href={hrefs.skus()}>See the stored SKUs</Link>
          </p>
        </section>
      ) : null}
    </>
  )
}
