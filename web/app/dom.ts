// Tiny DOM builder used by every panel: h('button.primary', {onclick}, 'Run') → element.

type Child = Node | string | number | null | undefined | false;
type Props = Record<string, unknown>;

/** Create an element from "tag#id.class1.class2", set properties/attributes, append children. */
export function h<K extends keyof HTMLElementTagNameMap>(spec: K | `${K}${'.' | '#'}${string}`, props: Props = {}, ...children: Child[]): HTMLElementTagNameMap[K] {
  const m = /^([a-z0-9]+)((?:[#.][\w-]+)*)$/i.exec(spec);
  if (!m) throw new Error(`bad element spec "${spec}"`);
  const el = document.createElement(m[1] as K);
  for (const part of m[2].match(/[#.][\w-]+/g) ?? []) {
    if (part[0] === '#') el.id = part.slice(1); else el.classList.add(part.slice(1));
  }
  for (const [k, v] of Object.entries(props)) {
    if (v === undefined || v === null || v === false) continue;
    if (k.startsWith('on') && typeof v === 'function') el.addEventListener(k.slice(2), v as EventListener);
    else if (k === 'dataset') Object.assign(el.dataset, v);
    else if (k in el && k !== 'list' && k !== 'form') (el as unknown as Props)[k] = v;
    else el.setAttribute(k, v === true ? '' : String(v));
  }
  for (const c of children) if (c !== null && c !== undefined && c !== false) el.append(typeof c === 'number' ? String(c) : c);
  return el;
}

/** Replace all children of `el`. */
export function setChildren(el: Element, ...children: Child[]): void {
  el.replaceChildren(...children.filter((c): c is Node | string | number => c !== null && c !== undefined && c !== false)
    .map((c) => (typeof c === 'number' ? String(c) : c)));
}

/** Format a number with fixed decimals, or an en dash when not finite. */
export function fmt(x: number | null | undefined, decimals = 0): string {
  return x === null || x === undefined || !Number.isFinite(x) ? '–' : x.toFixed(decimals);
}

/**
 * A render for a tab pane that only runs while the pane is shown (class `active`, see layout.ts): asked while
 * hidden, it runs once when the pane is next shown. Returns the function to call instead of `render`.
 */
export function renderWhenShown(pane: HTMLElement, render: () => void): () => void {
  let stale = false;
  new MutationObserver(() => {
    if (stale && pane.classList.contains('active')) { stale = false; render(); }
  }).observe(pane, { attributes: true, attributeFilter: ['class'] });
  return () => {
    if (pane.classList.contains('active')) { stale = false; render(); } else stale = true;
  };
}
