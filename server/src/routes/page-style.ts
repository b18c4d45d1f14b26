/** The Nadirline palette (console/src/styles/tokens.css, Day and Night) for the server's own pages (docs, placeholders, the development mailbox). */
export const PAGE_CSS = `
@font-face { font-family: 'Work Sans'; font-weight: 400; font-style: normal; font-display: swap; src: url(/fonts/work-sans-latin-400-normal.woff2) format('woff2'); }
@font-face { font-family: 'Work Sans'; font-weight: 600; font-style: normal; font-display: swap; src: url(/fonts/work-sans-latin-600-normal.woff2) format('woff2'); }
:root { --paper: #f2f5f8; --ink: #0f1b2a; --muted: #3b4859; --rule: #d2dae3; --accent: #08646f; --code: #e4eaf0; --warn: #7a4f00; }
@media (prefers-color-scheme: dark) { :root { --paper: #0b1118; --ink: #e4ebf2; --muted: #b3c0cd; --rule: #243140; --accent: #4fc3cc; --code: #131b25; --warn: #e7bf62; } }
* { box-sizing: border-box; }
body { margin: 0; background: var(--paper); color: var(--ink); font: 16px/1.55 'Work Sans', system-ui, sans-serif; }
main { max-width: 58rem; margin: 0 auto; padding: 2rem 1.25rem 4rem; }
h1 { font-weight: 600; font-size: 1.9rem; margin: 0 0 .25rem; }
h2 { font-weight: 600; font-size: 1.3rem; margin: 2.5rem 0 .5rem; padding-top: 1rem; border-top: 1px solid var(--rule); }
h3 { font-weight: 600; font-size: 1rem; margin: 1.25rem 0 .25rem; }
a { color: var(--accent); }
code, pre { font-family: ui-monospace, 'SFMono-Regular', Menlo, Consolas, monospace; font-size: .88em; background: var(--code); border-radius: 3px; }
code { padding: .05em .3em; }
pre { padding: .75rem; overflow-x: auto; }
table { border-collapse: collapse; width: 100%; margin: .5rem 0 1rem; font-size: .94rem; }
th, td { text-align: left; vertical-align: top; padding: .35rem .5rem; border-bottom: 1px solid var(--rule); }
th { font-weight: 600; color: var(--muted); }
.method { display: inline-block; min-width: 3.5rem; font-weight: 600; color: var(--accent); }
.muted { color: var(--muted); }
.note { border-left: 3px solid var(--warn); padding: .25rem .75rem; color: var(--muted); }
nav.top { display: flex; flex-wrap: wrap; gap: .5rem 1rem; font-size: .95rem; margin-bottom: 1.5rem; }
li, p, h1, h2, h3 { overflow-wrap: anywhere; }
/* In a table cell "anywhere" would let the column shrink to one letter ("windo|w"); break-word
   breaks a long word only when it cannot fit its column. */
td { overflow-wrap: break-word; }
td code { overflow-wrap: anywhere; }
/* A field's dotted path breaks only after a dot, never inside a name. */
code.field { overflow-wrap: normal; word-break: normal; }
code.field span { white-space: nowrap; }
/* The route index: the link underlines the path, not the gap after the method. */
ul.routes a { text-decoration: none; }
ul.routes a code { text-decoration: underline; }
a:focus-visible { outline: 3px solid var(--accent); outline-offset: 2px; border-radius: 2px; }
/* Narrow screens: each row of a wide table becomes a block, each cell labelled by its column. */
@media (max-width: 40rem) {
  main { padding: 1.25rem 1rem 3rem; }
  table.stack, table.stack tbody, table.stack tr, table.stack td { display: block; width: 100%; }
  table.stack tr.head { display: none; }
  table.stack tr { padding: .5rem 0; border-bottom: 1px solid var(--rule); }
  table.stack td { padding: .1rem 0; border: 0; }
  table.stack td[data-label]::before { content: attr(data-label) ": "; font-weight: 600; color: var(--muted); }
  table.stack td.lead::before { content: none; }
  table.stack td:empty { display: none; }
  table.stack td.lead { font-weight: 600; }
}
`;
