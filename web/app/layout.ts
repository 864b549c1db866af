// The page skeleton: top bar (with the run controls), left column (imagery, areas, detector), map, right tabs, caution strip.
import { h } from './dom.ts';

export type TabName = 'tally' | 'compare' | 'check' | 'takeaway';

/** Containers the panels render into. */
export interface Layout {
  topChips: HTMLElement;
  imagery: HTMLElement;
  areas: HTMLElement;
  detector: HTMLElement;
  run: HTMLElement;
  map: HTMLElement;
  mapOverlay: HTMLElement;
  notices: HTMLElement;
  tabs: Record<TabName, HTMLElement>;
  showTab(name: TabName): void;
  foot: HTMLElement;
}

const tabTitles: Record<TabName, string> = { tally: 'Tally', compare: 'Then & now', check: 'Check', takeaway: 'Take away' };

/** Build the skeleton inside `root` and return its containers. */
export function buildLayout(root: HTMLElement): Layout {
  const block = (title: string, id: string) => {
    const body = h('div', { id: `${id}-body` });
    return { el: h('section.block', { id }, h('h2', {}, title), body), body };
  };
  const imagery = block('Imagery', 'imagery');
  const areas = block('Areas', 'areas');
  const detector = block('Detector', 'detector');
  const run = { body: h('div.runbar', { id: 'run' }) };
  const topChips = h('div.row');
  const map = h('div#map', { tabIndex: 0 });
  const mapOverlay = h('div.mapoverlay');
  const notices = h('div.notices', { role: 'status', 'aria-live': 'polite' });
  const tabButtons = h('div.tabs', { role: 'tablist' });
  const tabs = {} as Record<TabName, HTMLElement>;
  const right = h('aside.right', {}, tabButtons);
  const showTab = (name: TabName) => {
    for (const [k, pane] of Object.entries(tabs)) pane.classList.toggle('active', k === name);
    for (const b of tabButtons.querySelectorAll('button')) b.classList.toggle('active', b.dataset.tab === name);
  };
  for (const name of Object.keys(tabTitles) as TabName[]) {
    tabs[name] = h('div.tabpane', { id: `tab-${name}`, role: 'tabpanel' });
    tabButtons.append(h('button', { dataset: { tab: name }, role: 'tab', onclick: () => showTab(name) }, tabTitles[name]));
    right.append(tabs[name]);
  }
  const foot = h('footer.foot');
  root.replaceChildren(
    h('header.topbar', {},
      h('div.brand', {}, 'seam', h('span', {}, 'tally')),
      h('div.tagline', {}, 'count compact objects inside your areas, on your own machine'),
      h('div.spacer'), run.body, topChips),
    h('aside.left', {}, imagery.el, areas.el, detector.el),
    h('main.mapwrap', {}, map, notices, mapOverlay),
    right,
    foot,
  );
  showTab('tally');
  return { topChips, imagery: imagery.body, areas: areas.body, detector: detector.body, run: run.body, map, mapOverlay,
    notices, tabs, showTab, foot };
}
