/// <reference lib="dom" />
/**
 * Building page elements. Text goes in as textContent, never as markup, so a
 * name from the store (a fibre called `<img onerror=…>`) shows as text. No
 * style attributes: classes only (the Content-Security-Policy allows no
 * inline style).
 */

/** A new element with optional class and text (set as textContent). */
export function el<K extends keyof HTMLElementTagNameMap>(tag: K, cls?: string, text?: string): HTMLElementTagNameMap[K] {
  const e = document.createElement(tag);
  if (cls) e.className = cls;
  if (text !== undefined) e.textContent = text;
  return e;
}

/** Append children (strings become text nodes) and return the parent. */
export function put<T extends Node>(parent: T, ...children: (Node | string | null | undefined | false)[]): T {
  for (const c of children) if (c !== null && c !== undefined && c !== false) parent.appendChild(typeof c === 'string' ? document.createTextNode(c) : c);
  return parent;
}

/** A link with text. */
export function link(href: string, text: string, cls?: string): HTMLAnchorElement {
  const a = el('a', cls, text);
  a.href = href;
  return a;
}

/** A section with a heading. */
export function section(title: string, cls = 'block'): HTMLElement {
  const s = el('section', cls);
  s.appendChild(el('h2', undefined, title));
  return s;
}

/** A table: header cells, then rows of cells (text or nodes); cells with a class given as [node, class]. */
export function table(head: string[], rows: (Node | string | [Node | string, string])[][], cls = 'data'): HTMLTableElement {
  const t = el('table', cls);
  const thead = put(t, el('thead')).lastChild as HTMLTableSectionElement;
  const hr = put(thead, el('tr')).lastChild as HTMLTableRowElement;
  for (const h of head) hr.appendChild(el('th', undefined, h));
  const body = el('tbody');
  for (const r of rows) {
    const tr = el('tr');
    for (const c of r) {
      const [content, k] = Array.isArray(c) ? c : [c, undefined];
      put(tr, put(el('td', k), content));
    }
    body.appendChild(tr);
  }
  t.appendChild(body);
  return t;
}

/** Key–value rows (th, td). */
export function facts(rows: [string, Node | string][], cls = 'facts'): HTMLTableElement {
  const t = el('table', cls);
  const body = put(t, el('tbody')).lastChild as HTMLTableSectionElement;
  for (const [k, v] of rows) {
    const tr = el('tr');
    put(tr, el('th', undefined, k), put(el('td'), v));
    body.appendChild(tr);
  }
  return t;
}

/** Remove every child. */
export function clear(e: Element): void {
  while (e.firstChild) e.removeChild(e.firstChild);
}

/** The page's main element. */
export function mainElement(): HTMLElement {
  return document.getElementById('main') as HTMLElement;
}

/** A message in place of the page content (a failed request, say). */
export function showProblem(where: HTMLElement, message: string): void {
  where.appendChild(el('p', 'problem', message));
}
