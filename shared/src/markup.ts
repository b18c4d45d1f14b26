/**
 * Text into HTML or XML: the five characters that could end a text or an attribute value become
 * character references. HTML pages and e-mails write the apostrophe as &#39;; XML (OMM) as
 * &apos;, the entity XML 1.0 predefines (section 4.6).
 */
const HTML: Record<string, string> = { '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' };
const XML: Record<string, string> = { ...HTML, "'": '&apos;' };

export function escapeMarkup(text: string, flavour: 'html' | 'xml' = 'html'): string {
  const table = flavour === 'xml' ? XML : HTML;
  return text.replace(/[&<>"']/g, (c) => table[c] ?? c);
}
