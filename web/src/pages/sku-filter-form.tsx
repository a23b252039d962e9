import { modelLabel } from '../format'
import { Link, hrefs } from '../router'
import { MEASURE_OPTIONS, MODEL_OPTIONS, WARNING_OPTIONS, type SkuQuery } from '../sku-filters'

export const PAGE_SIZES = [25, 50, 100, 200] as const

/**
 * The SKU list's filter controls: typed fields call onType (the list applies them
 * after a pause), selects and checkboxes onChoose (applied at once). Every
 * control has a visible label; the checkboxes sit in a fieldset with a legend.
 */
export function SkuFilterForm({
  draft,
  filtered,
  limit,
  onLimit,
  onSubmit,
  onType,
  onChoose,
}: {
  draft: SkuQuery
  filtered: boolean
  limit: number
  onLimit: (limit: number) => void
  onSubmit: () => void
  onType: (next: SkuQuery) => void
  onChoose: (next: SkuQuery) => void
}) {
  return (
    <>
      <form
        class="filters"
        role="search"
        aria-label="Find SKUs"
        onSubmit={(e) => {
          e.preventDefault()
          onSubmit()
        }}
      >
        <div class="field">
          <label for="sku-prefix">SKU starts with</label>
          <input
            id="sku-prefix"
            type="search"
            value={draft.prefix}
            autocomplete="off"
            spellcheck={false}
            onInput={(e) => onType({ ...draft, prefix: (e.target as HTMLInputElement).value })}
          />
        </div>
        <div class="field">
          <label for="sku-tag">Tag</label>
          <input
            id="sku-tag"
            type="search"
            value={draft.tag}
            placeholder="category:garden"
            autocomplete="off"
            spellcheck={false}
            onInput={(e) => onType({ ...draft, tag: (e.target as HTMLInputElement).value })}
          />
        </div>
        <div class="field">
          <label for="sku-model">Model</label>
          <select id="sku-model" value={draft.model} onChange={(e) => onChoose({ ...draft, model: (e.target as HTMLSelectElement).value })}>
            <option value="">Any model</option>
            {MODEL_OPTIONS.map((m) => (
              <option key={m} value={m}>
                {modelLabel(m)}
              </option>
            ))}
          </select>
        </div>
        <div class="field">
          <label for="sku-warning">Warning</label>
          <select id="sku-warning" value={draft.warning} onChange={(e) => onChoose({ ...draft, warning: (e.target as HTMLSelectElement).value })}>
            <option value="">Any</option>
            {WARNING_OPTIONS.map((w) => (
              <option key={w} value={w}>
                {w}
              </option>
            ))}
          </select>
        </div>
        <div class="field">
          <label for="sku-min-error">Holdout error at least</label>
          <input
            id="sku-min-error"
            type="number"
            min="0"
            step="any"
            inputMode="decimal"
            class="narrow"
            value={draft.minError}
            aria-describedby="sku-error-help"
            onInput={(e) => onType({ ...draft, minError: (e.target as HTMLInputElement).value })}
          />
        </div>
        <div class="field">
          <label for="sku-error-measure">Error measure</label>
          <select
            id="sku-error-measure"
            value={draft.errorMeasure}
            onChange={(e) => onChoose({ ...draft, errorMeasure: (e.target as HTMLSelectElement).value })}
          >
            {MEASURE_OPTIONS.map(([m, label]) => (
              <option key={m} value={m}>
                {label}
              </option>
            ))}
          </select>
        </div>
        <fieldset class="field checks">
          <legend>Show only</legend>
          <label>
            <input type="checkbox" checked={draft.failed} onChange={(e) => onChoose({ ...draft, failed: (e.target as HTMLInputElement).checked })} />{' '}
            Failed forecasts
          </label>
          <label>
            <input
              type="checkbox"
              checked={draft.exception}
              onChange={(e) => onChoose({ ...draft, exception: (e.target as HTMLInputElement).checked })}
            />{' '}
            On the exception list
          </label>
        </fieldset>
        <div class="field">
          <label for="sku-sort">Order</label>
          <select id="sku-sort" value={draft.sort} onChange={(e) => onChoose({ ...draft, sort: (e.target as HTMLSelectElement).value })}>
            <option value="">By SKU</option>
            <option value="error">Largest holdout error first</option>
          </select>
        </div>
        <div class="field">
          <label for="sku-limit">Per page</label>
          <select id="sku-limit" value={String(limit)} onChange={(e) => onLimit(Number((e.target as HTMLSelectElement).value))}>
            {PAGE_SIZES.map((n) => (
              <option key={n} value={String(n)}>
                {n}
              </option>
            ))}
          </select>
        </div>
        <button type="submit">Search</button>
        {filtered ? (
          <Link href={hrefs.skus()} class="clear-filters">
            Clear filters
          </Link>
        ) : null}
      </form>
      <p id="sku-error-help" class="muted small">
        The holdout error of the model each SKU's newest published run chose, on the measure that run ranked by (MASE unless it
        asked for another); the threshold and the order by error use the measure chosen beside it, and list only SKUs ranked by
        it. Model, warning, error and failed reflect that run; they are estimates to review before ordering.
      </p>
    </>
  )
}
