/** Text for HTML: the one escape every page and report uses, so a name from the store shows as text, never as markup. */
const ENTITIES: Record<string, string> = { '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' };

/** Escape &, <, >, " and ' (safe in element text and in quoted attribute values). */
export function escapeHtml(s: string): string {
  return s.replace(/[&<>"']/g, (c) => ENTITIES[c]);
}
