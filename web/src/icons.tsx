/** Our own small line icons (24 x 24 grid, currentColor); always next to a text label. */

const paths = {
  overview: 'M4 13h6V4H4zm10 7h6v-9h-6zM4 20h6v-4H4zm10-11h6V4h-6z',
  list: 'M9 6h11M9 12h11M9 18h11M4.5 6h.01M4.5 12h.01M4.5 18h.01',
  upload: 'M12 16V4m0 0-4.5 4.5M12 4l4.5 4.5M4 15v4a1 1 0 0 0 1 1h14a1 1 0 0 0 1-1v-4',
  check: 'M5 12.5 10 17l9-10',
  cross: 'M6 6l12 12M18 6 6 18',
  clock: 'M12 7v5l3 2m6-2a9 9 0 1 1-18 0 9 9 0 0 1 18 0z',
  spinner: 'M12 3a9 9 0 1 0 9 9',
  alert: 'M12 9v4m0 3.5h.01M10.3 4.2 2.9 17a2 2 0 0 0 1.7 3h14.8a2 2 0 0 0 1.7-3L13.7 4.2a2 2 0 0 0-3.4 0z',
  info: 'M12 11v5m0-8.5h.01M21 12a9 9 0 1 1-18 0 9 9 0 0 1 18 0z',
  key: 'M14.5 9.5a4.5 4.5 0 1 1-3.2 1.3M11.3 10.8 4 18v2h3v-2h2v-2h2l1.3-1.3',
  flag: 'M5 21V4m0 0h11l-2 4 2 4H5',
  chosen: 'M12 3.5l2.6 5.3 5.9.9-4.3 4.1 1 5.8-5.2-2.7-5.2 2.7 1-5.8-4.3-4.1 5.9-.9z',
} as const

export type IconName = keyof typeof paths

export function Icon({ name, class: cls }: { name: IconName; class?: string }) {
  return (
    <svg class={`icon ${cls ?? ''}`} viewBox="0 0 24 24" aria-hidden="true" focusable="false">
      <path d={paths[name]} fill="none" stroke="currentColor" stroke-width="2" stroke-linecap="round" stroke-linejoin="round" />
    </svg>
  )
}

/** The workbench's mark: a calendar page with a rising line. */
export function Mark() {
  return (
    <svg class="mark" viewBox="0 0 32 32" aria-hidden="true" focusable="false">
      <rect x="3" y="6" width="26" height="23" rx="3" fill="none" stroke="currentColor" stroke-width="2.2" />
      <path d="M3 12h26M10 3v6M22 3v6" stroke="currentColor" stroke-width="2.2" stroke-linecap="round" />
      <path d="M8 24l5-5 4 3 7-7" fill="none" stroke="currentColor" stroke-width="2.2" stroke-linecap="round" stroke-linejoin="round" />
    </svg>
  )
}
