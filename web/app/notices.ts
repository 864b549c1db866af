// Plain-sentence notices over the map: errors say what went wrong and what to do; info fades away.
import type { AppState } from './state.ts';
import { h } from './dom.ts';

/** Show every 'notice' event of the state in `container`. */
export function mountNotices(state: AppState, container: HTMLElement): void {
  state.events.on('notice', ({ level, text }) => {
    const el = h(`div.notice.${level}`, { role: level === 'error' ? 'alert' : 'status', dataset: { level } },
      h('div.text', {}, text),
      h('button.small', { 'aria-label': 'Dismiss', onclick: () => el.remove() }, '×'));
    container.append(el);
    if (level === 'info') setTimeout(() => el.remove(), 6000);
    while (container.children.length > 4) container.firstElementChild?.remove();
  });
}
