/**
 * Shows a Markdown file of the examples as HTML (used by curl.html): headings, paragraphs, fenced
 * code, tables, lists and `inline code`, which is all the examples' Markdown uses. Text is escaped;
 * nothing in the file can add markup of its own.
 */
const esc = (s) => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;');
const inline = (s) =>
  esc(s)
    .replace(/`([^`]+)`/g, '<code>$1</code>')
    .replace(/\[([^\]]+)\]\(([^)\s]+)\)/g, (m, text, href) => (/^(https?:|\/|[\w.-]+$)/.test(href) ? `<a href="${href}">${text}</a>` : m));
const cells = (row) => row.trim().replace(/^\||\|$/g, '').split('|').map((c) => c.trim());

export function renderMarkdown(md) {
  const lines = md.replace(/\r\n?/g, '\n').split('\n');
  const out = [];
  for (let i = 0; i < lines.length; ) {
    const line = lines[i];
    const fence = /^```(\w*)/.exec(line);
    if (fence) {
      const body = [];
      for (i++; i < lines.length && !lines[i].startsWith('```'); i++) body.push(lines[i]);
      i++;
      out.push(`<pre><code${fence[1] ? ` class="language-${fence[1]}"` : ''}>${esc(body.join('\n'))}</code></pre>`);
    } else if (/^#{1,6} /.test(line)) {
      const n = /^#+/.exec(line)[0].length;
      out.push(`<h${n}>${inline(line.slice(n + 1))}</h${n}>`);
      i++;
    } else if (line.startsWith('|') && lines[i + 1]?.startsWith('| ---')) {
      const head = cells(line);
      const rows = [];
      for (i += 2; i < lines.length && lines[i].startsWith('|'); i++) rows.push(cells(lines[i]));
      out.push(
        `<table><thead><tr>${head.map((c) => `<th>${inline(c)}</th>`).join('')}</tr></thead><tbody>` +
          rows.map((r) => `<tr>${r.map((c) => `<td>${inline(c)}</td>`).join('')}</tr>`).join('') +
          '</tbody></table>',
      );
    } else if (/^[-*] /.test(line)) {
      const items = [];
      for (; i < lines.length && /^[-*] /.test(lines[i]); i++) items.push(`<li>${inline(lines[i].slice(2))}</li>`);
      out.push(`<ul>${items.join('')}</ul>`);
    } else if (line.trim() === '') i++;
    else {
      const para = [];
      for (; i < lines.length && lines[i].trim() !== '' && !/^(```|#{1,6} |\||[-*] )/.test(lines[i]); i++) para.push(lines[i]);
      out.push(`<p>${inline(para.join(' '))}</p>`);
    }
  }
  return out.join('\n');
}

if (typeof document !== 'undefined') {
  const doc = document.getElementById('doc');
  if (doc?.dataset.src) {
    fetch(doc.dataset.src)
      .then((r) => (r.ok ? r.text() : Promise.reject(new Error(String(r.status)))))
      .then((md) => {
        doc.innerHTML = renderMarkdown(md);
        const h1 = doc.querySelector('h1');
        if (h1) document.title = h1.textContent;
      })
      .catch(() => {
        doc.querySelector('p')?.append(' (It could not be shown here just now.)');
      });
  }
}
