// The demo is offered, not imposed: the analyst opens it by choice (or the address asks for it with ?demo=open or
// ?manifest=…), can put it away, and what they removed stays removed. The choice and the removed demo scenes are
// kept in localStorage (small settings, not work); the demo's areas are imported once, so areas the analyst deleted
// do not come back.
import type { AppState } from './state.ts';
import type { DemoManifest } from './demo.ts';
import { openDemo } from './demo.ts';
import { removeScene, type SceneServices } from './scene-open.ts';
import { deleteArea } from './aoi-actions.ts';
import { h, setChildren } from './dom.ts';

const CHOICE_KEY = 'seamtally.demo';
const REMOVED_KEY = 'seamtally.demo.removed';
const AREAS_KEY = 'seamtally.demo.areas';

export type DemoChoice = 'open' | 'closed' | null;

function read(key: string): string | null {
  try { return localStorage.getItem(key); } catch { return null; }
}
function write(key: string, value: string | null): void {
  try { if (value === null) localStorage.removeItem(key); else localStorage.setItem(key, value); } catch { /* settings not kept */ }
}

/** What the analyst chose last time (null: never chose). */
export function demoChoice(): DemoChoice {
  const v = read(CHOICE_KEY);
  return v === 'open' || v === 'closed' ? v : null;
}

/** A scene URL as the page resolves it (demo manifests give relative ones). */
const absolute = (url: string): string => new URL(url, location.href).href;

function removedUrls(): string[] {
  try { return JSON.parse(read(REMOVED_KEY) ?? '[]') as string[]; } catch { return []; }
}

/** The demo's scene URLs as the page opens them (absolute). */
function demoUrls(demo: DemoManifest): string[] {
  return demo.scenes.map((s) => absolute(s.url));
}

/** Remember that a demo scene was removed (called for every removed URL scene; others are ignored on reopen). */
export function rememberRemovedScene(url: string): void {
  const all = new Set(removedUrls());
  all.add(absolute(url));
  write(REMOVED_KEY, JSON.stringify([...all]));
}

export class DemoOffer {
  constructor(private state: AppState, private svc: SceneServices, readonly demo: DemoManifest) {}

  /** True while any of the demo's scenes is open. */
  isOpen(): boolean {
    const urls = new Set(demoUrls(this.demo));
    return this.state.scenes.some((s) => s.origin.kind === 'url' && urls.has(absolute(s.origin.url)));
  }

  /**
   * Open the demo: its scenes (less those the analyst removed, unless `all`) and, the first time only, its areas.
   * Remembered as the choice for the next visits.
   */
  async open(all = false): Promise<void> {
    write(CHOICE_KEY, 'open');
    if (all) write(REMOVED_KEY, null);
    const removed = new Set(removedUrls());
    const scenes = this.demo.scenes.filter((s) => !removed.has(absolute(s.url)));
    const firstTime = read(AREAS_KEY) === null;
    await openDemo(this.state, this.svc, { ...this.demo, scenes }, firstTime || all);
    write(AREAS_KEY, 'imported');
  }

  /** Put the demo away: close its scenes, delete the areas it brought, and do not open it on the next visits. */
  async putAway(demoAreaIds: readonly string[]): Promise<void> {
    write(CHOICE_KEY, 'closed');
    const urls = new Set(demoUrls(this.demo));
    for (const s of [...this.state.scenes]) {
      if (s.origin.kind === 'url' && urls.has(absolute(s.origin.url))) await removeScene(this.state, this.svc, s.fingerprint);
    }
    for (const id of demoAreaIds) if (this.state.aois.some((a) => a.id === id)) await deleteArea(this.state, id);
  }

  /** Start without the demo (the first visit's other choice). */
  startEmpty(): void {
    write(CHOICE_KEY, 'closed');
  }
}

/** The demo's line in the Imagery block: the first visit's choice, then "put away" or "open" as fits. */
export function mountDemoOffer(state: AppState, el: HTMLElement, offer: DemoOffer, areaIds: () => Promise<string[]>): void {
  const box = h('div', { dataset: { testid: 'demo-offer' } });
  el.prepend(box);
  let busy = false;
  const act = (fn: () => Promise<void> | void) => async () => {
    if (busy) return;
    busy = true; render();
    try { await fn(); } finally { busy = false; render(); }
  };
  const render = () => {
    const choice = demoChoice();
    if (offer.isOpen()) {
      setChildren(box, h('div.row.muted', {}, 'Demo open: an invented place (every object in it is known). ',
        h('button.small', { dataset: { testid: 'demo-put-away' }, disabled: busy, onclick: act(async () => offer.putAway(await areaIds())) }, 'Put the demo away')));
    } else if (choice === null && state.scenes.length === 0) {
      setChildren(box, h('div.reviewcard', {},
        h('div', {}, h('b', {}, 'Start'), ' · nothing is uploaded: everything stays in this browser'),
        h('div.row', {}, h('button.small.primary', { dataset: { testid: 'demo-open' }, disabled: busy, onclick: act(() => offer.open(true)) }, 'Open the demo'),
          h('span.muted', {}, 'an invented business park on two dates, with areas, ready to run')),
        h('div.row', {}, h('button.small', { dataset: { testid: 'start-empty' }, disabled: busy, onclick: act(() => offer.startEmpty()) }, 'Start with my own scenes'),
          h('span.muted', {}, 'drop GeoTIFF / COG files below'))));
    } else {
      setChildren(box, h('div.row', {}, h('button.small', { dataset: { testid: 'demo-open' }, disabled: busy, onclick: act(() => offer.open(true)) }, 'Open the demo')));
    }
  };
  state.events.on('scenes-changed', render);
  render();
}
