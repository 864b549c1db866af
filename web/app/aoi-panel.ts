// The "Areas" block: tools to draw, cut holes and edit on the map, the list (rename, zoom, delete), import/export.
import type { AppState } from './state.ts';
import type { AoiLayer, AoiTool } from './aoi-layer.ts';
import { h, setChildren, fmt } from './dom.ts';
import { deleteArea, exportAreas, importAreas, renameArea } from './aoi-actions.ts';
import { download, pickFiles } from './download.ts';
import { multiPolygonAreaM2, m2ToHa } from '../core/geodesic-area.ts';

/** Render the areas block into `el` and keep it current. */
export function mountAoiPanel(state: AppState, el: HTMLElement, layer: AoiLayer): void {
  const toolHint: Record<AoiTool, string> = {
    none: '',
    draw: 'Click the corners of the area; double-click to finish. Esc cancels.',
    hole: 'Draw the hole inside an area; double-click to finish.',
    edit: 'Drag vertices to move them; click an edge to add one; Alt+click a vertex to remove it.',
  };
  const hint = h('div.muted', { dataset: { testid: 'aoi-hint' } });
  const toolButton = (tool: AoiTool, label: string) => h('button.small', {
    dataset: { tool },
    onclick: () => { layer.setTool(layer.currentTool() === tool ? 'none' : tool); refreshTools(); },
  }, label);
  const tools = h('div.row', {}, toolButton('draw', 'Draw area'), toolButton('hole', 'Cut hole'), toolButton('edit', 'Edit'));
  const refreshTools = () => {
    for (const b of tools.querySelectorAll<HTMLButtonElement>('button')) b.classList.toggle('primary', b.dataset.tool === layer.currentTool());
    hint.textContent = toolHint[layer.currentTool()];
  };
  const list = h('ul.list', { dataset: { testid: 'aoi-list' } });
  const io = h('div.row', {},
    h('button.small', { onclick: async () => {
      const [f] = await pickFiles('.geojson,.json,application/geo+json', false);
      if (f) await importAreas(state, await f.text());
    } }, 'Import GeoJSON'),
    h('button.small', { onclick: () => download('areas.geojson', exportAreas(state), 'application/geo+json') }, 'Export GeoJSON'));
  el.append(tools, hint, list, io);
  document.addEventListener('keydown', (e) => {
    if (e.key === 'Escape' && layer.currentTool() !== 'none') { layer.setTool('none'); refreshTools(); }
  });

  const render = () => {
    layer.render(state.aois);
    setChildren(list, ...state.aois.map((a) => {
      const name = h('input', { type: 'text', value: a.name, 'aria-label': 'Area name', onchange: () => renameArea(state, a.id, name.value) });
      const holes = a.polygonsLonLat.reduce((n, p) => n + p.length - 1, 0);
      return h('li', { dataset: { aoi: a.id } },
        h('div.row', {}, name, h('button.small', { title: 'Delete this area', onclick: () => deleteArea(state, a.id) }, 'Delete')),
        h('div.muted', {}, `${fmt(m2ToHa(multiPolygonAreaM2(a.polygonsLonLat)), 2)} ha`, holes ? ` · ${holes} hole${holes > 1 ? 's' : ''}` : ''));
    }));
    if (state.aois.length === 0) list.append(h('li.muted', {}, 'No areas yet: draw one on the map or import a GeoJSON file.'));
  };
  state.events.on('aois-changed', render);
  render();
}
