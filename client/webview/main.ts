// The preview page: one bundle for the VS Code webview and the standalone HTML export.
// It receives an encoded Result (a message from the extension, or JSON embedded in the page), draws
// the chosen slice, and reports clicks and saves back to its host. Scene text is set with textContent only.
import type { Result } from '../../server/src/engine/result';
import { decodeResult } from '../../server/src/engine/result-json';
import type { ExtensionToPreviewMessage, PreviewShowMessage, SolveState, SweepResultParams } from '../../server/src/protocol';
import { readPalette } from './colours';
import { pngDataUrl, svgText } from './export';
import { formatField, formatLength, formatPotential, engineering } from './format';
import { describeSlice, fromPx, insideFrame, sampleBilinear, cellAt } from './geometry';
import { getHost, ViewState } from './host';
import { drawLinePlot } from './line-plot';
import { drawPicture, Picture } from './picture';
import { drawSweepPlot, SWEEP_FIGURES, type SweepFigure } from './sweep-plot';
import { htmlEl } from './svg';

const host = getHost();
const saved = host.getState();
const view: ViewState = {
  slice: saved.slice ?? 0,
  mode: saved.mode ?? 'potential',
  fieldLines: saved.fieldLines ?? true,
};

interface Shown {
  result: Result;
  title: string;
  stale: boolean;
  level: string;
  version: number;
}
let shown: Shown | null = null;
let picture: Picture | null = null;
let solving = false;
let problem: string | null = null;

// ---- the page's fixed parts ----
const root = htmlEl('main', { class: 'preview' }, document.body);
const header = htmlEl('header', { class: 'bar' }, root);
const titleEl = htmlEl('h1', { class: 'title', id: 'title' }, header, 'Voltscape field preview');
const statusEl = htmlEl('span', { class: 'status', id: 'status', role: 'status' }, header);
const tools = htmlEl('div', { class: 'tools' }, root);
const sliceLabel = htmlEl('label', { class: 'tool' }, tools, 'Slice ');
const sliceSelect = htmlEl('select', { id: 'slice-picker' }, sliceLabel);
const modeButton = htmlEl('button', { id: 'mode-toggle', type: 'button', 'aria-pressed': 'false', class: 'tool' }, tools, 'Field strength map');
const linesLabel = htmlEl('label', { class: 'tool' }, tools);
const linesBox = htmlEl('input', { id: 'field-lines-toggle', type: 'checkbox' }, linesLabel);
linesLabel.append(' Field lines');
const svgButton = htmlEl('button', { id: 'save-svg', type: 'button', class: 'tool' }, tools, 'Save SVG');
const pngButton = htmlEl('button', { id: 'save-png', type: 'button', class: 'tool' }, tools, 'Save PNG');
const figure = htmlEl('div', { id: 'figure', class: 'figure' }, root);
const readout = htmlEl('p', { id: 'readout', class: 'readout' }, root, 'Point at the picture to read the potential and field.');
const notesEl = htmlEl('ul', { id: 'notes', class: 'notes' }, root);
// The sweep: shown only while the scene has one (the server sends it after the full result).
const sweepEl = htmlEl('section', { id: 'sweep', class: 'sweep plots', hidden: '' }, root);
const sweepHead = htmlEl('div', { class: 'tools' }, sweepEl);
htmlEl('h2', { class: 'sweep-title' }, sweepHead, 'Sweep');
const sweepLabel = htmlEl('label', { class: 'tool' }, sweepHead, 'Plot ');
const sweepSelect = htmlEl('select', { id: 'sweep-figure' }, sweepLabel);
for (const f of SWEEP_FIGURES) htmlEl('option', { value: f.key }, sweepSelect, f.label);
const sweepStatus = htmlEl('span', { class: 'status', id: 'sweep-status', role: 'status' }, sweepHead);
const sweepPlot = htmlEl('figure', { id: 'sweep-plot', class: 'plot' }, sweepEl);
const plotsEl = htmlEl('section', { id: 'probe-plots', class: 'plots' }, root);
const tableEl = htmlEl('section', { id: 'electrodes', class: 'electrodes' }, root);
htmlEl(
  'p',
  { class: 'caution' },
  root,
  'High voltage kills. These figures are a design aid only; they do not replace the applicable standards, local codes, testing and licensed practice.',
);
linesBox.checked = view.fieldLines;

function saveView(): void {
  host.setState({ ...view });
}

// ---- status and stale mark ----
function setStatus(): void {
  const stale = !!shown && (shown.stale || solving || problem !== null);
  document.body.dataset.stale = stale ? 'true' : 'false';
  figure.classList.toggle('stale', stale);
  statusEl.classList.toggle('status-problem', problem !== null || !!shown?.stale);
  if (problem) statusEl.textContent = problem;
  else if (shown?.stale) statusEl.textContent = 'Out of date: the scene has errors; showing the last good result';
  else if (solving) statusEl.textContent = shown ? 'Updating… (showing the previous result)' : 'Solving…';
  else if (shown) statusEl.textContent = shown.level === 'coarse' ? 'Coarse result shown; refining…' : '';
  else statusEl.textContent = '';
}

// ---- drawing ----
function render(): void {
  figure.replaceChildren();
  notesEl.replaceChildren();
  plotsEl.replaceChildren();
  tableEl.replaceChildren();
  picture = null;
  if (!shown) return;
  const { result } = shown;
  const palette = readPalette();
  titleEl.textContent = shown.title;
  sliceSelect.replaceChildren();
  result.slices.forEach((s, k) => {
    const text = result.space === 'planar' ? 'x–y cross-section' : describeSlice(s, (m) => formatLength(m, 4));
    htmlEl('option', { value: String(k) }, sliceSelect, text);
  });
  if (view.slice >= result.slices.length) view.slice = 0;
  sliceSelect.value = String(view.slice);
  sliceSelect.disabled = result.slices.length < 2;
  modeButton.setAttribute('aria-pressed', view.mode === 'field' ? 'true' : 'false');
  if (result.slices.length === 0) {
    htmlEl('p', { class: 'empty' }, figure, 'This scene has no slice to draw: add a `slice` statement.');
  } else {
    picture = drawPicture(result, view.slice, {
      mode: view.mode,
      showFieldLines: view.fieldLines,
      palette,
      title: shown.title,
    });
    // Never wider than drawn: a tall, narrow slice must not blow up to the page's width.
    picture.svg.style.maxWidth = `${picture.svg.getAttribute('width')}px`;
    figure.appendChild(picture.svg);
    figure.dataset.levels = String(picture.levels);
    for (const note of picture.notes) htmlEl('li', {}, notesEl, note);
    if (result.space === '3d' && view.fieldLines) {
      htmlEl('li', {}, notesEl, 'Field lines on a slice of a 3d scene follow only the field components in the slice plane.');
    }
  }
  // What the solve itself reported (field limits, mesh warnings), with its code.
  for (const d of result.diagnostics) htmlEl('li', { class: `diagnostic ${d.severity}` }, notesEl, `${d.code}: ${d.message}`);
  for (const probe of result.probes) {
    if (probe.points.length < 2) continue;
    const box = htmlEl('figure', { class: 'plot' }, plotsEl);
    htmlEl('figcaption', {}, box, `Along probe ${probe.name}`);
    box.appendChild(drawLinePlot(probe, palette, palette.foreground, palette.peak));
  }
  renderTable(result);
  setStatus();
}

function renderTable(result: Result): void {
  if (result.electrodes.length === 0) return;
  const per = result.space === 'planar' ? '/m' : '';
  const table = htmlEl('table', {}, tableEl);
  const head = htmlEl('tr', {}, htmlEl('thead', {}, table));
  for (const h of ['Electrode', 'Potential', `Charge`, 'Peak field', `Capacitance`]) htmlEl('th', {}, head, h);
  const body = htmlEl('tbody', {}, table);
  result.electrodes.forEach((e, index) => {
    const row = htmlEl('tr', { 'data-electrode': String(index) }, body);
    htmlEl('td', {}, row, e.name);
    htmlEl('td', {}, row, formatPotential(e.potential));
    htmlEl('td', {}, row, engineering(e.charge, `C${per}`));
    htmlEl('td', {}, row, `${formatField(e.maxField)}${e.maxFieldOnEdge ? ' (on an edge: grows with refinement)' : ''}`);
    htmlEl('td', {}, row, engineering(e.capacitance, `F${per}`));
    row.addEventListener('click', () => selectElectrode(index));
    // Reachable from the keyboard too: Tab to a row, Enter or Space selects the statement.
    row.tabIndex = 0;
    row.setAttribute('aria-label', `${e.name}: select its statement in the editor`);
    row.addEventListener('keydown', (ev) => {
      if (ev.key === 'Enter' || ev.key === ' ') {
        ev.preventDefault();
        selectElectrode(index);
      }
    });
  });
  htmlEl('p', {}, tableEl, `Stored energy ${engineering(result.energy, `J${per}`)}.`);
}

function selectElectrode(index: number): void {
  const e = shown?.result.electrodes[index];
  if (!e) return;
  host.post({ type: 'selectElectrode', index, name: e.name, range: e.range });
  if (host.standalone) readout.textContent = `${e.name} is written on line ${e.range.start.line + 1} of the scene.`;
}

// ---- pointer readout and clicks ----
function pointerAt(ev: MouseEvent): [number, number] | null {
  if (!picture) return null;
  const ctm = picture.svg.getScreenCTM();
  if (!ctm) return null;
  const p = new DOMPoint(ev.clientX, ev.clientY).matrixTransform(ctm.inverse());
  const [u, v] = fromPx(picture.frame, p.x, p.y);
  return insideFrame(picture.frame, u, v) ? [u, v] : null;
}

figure.addEventListener('pointermove', (ev) => {
  const at = pointerAt(ev);
  if (!at || !picture || !shown) return;
  const [u, v] = at;
  const s = picture.slice;
  const [a, b] = s.plane === 'rz' ? ['r', 'z'] : [s.plane[0], s.plane[1]];
  const cell = cellAt(s, u, v);
  const inside = cell >= 0 ? s.inside[cell] : -1;
  const where = `${a} = ${formatLength(u)}, ${b} = ${formatLength(v)}`;
  if (inside >= 0) {
    const e = shown.result.electrodes[inside];
    readout.textContent = `${where} · inside ${e?.name ?? 'an electrode'} · φ = ${formatPotential(e?.potential ?? s.potential[cell])}`;
    return;
  }
  const phi = sampleBilinear(s, s.potential, u, v);
  let field = sampleBilinear(s, s.fieldMagnitude, u, v);
  if (!Number.isFinite(field) && cell >= 0) field = s.fieldMagnitude[cell];
  readout.textContent = `${where} · φ = ${formatPotential(phi)} · |E| = ${formatField(field)}`;
});

figure.addEventListener('click', (ev) => {
  const target = ev.target as Element | null;
  const hit = target?.closest('[data-electrode]');
  if (hit) return selectElectrode(Number(hit.getAttribute('data-electrode')));
  // A click inside a conductor's cross-section counts too.
  const at = pointerAt(ev);
  if (!at || !picture) return;
  const cell = cellAt(picture.slice, at[0], at[1]);
  if (cell >= 0 && picture.slice.inside[cell] >= 0) selectElectrode(picture.slice.inside[cell]);
});

// ---- controls ----
sliceSelect.addEventListener('change', () => {
  view.slice = Number(sliceSelect.value);
  saveView();
  render();
});
modeButton.addEventListener('click', () => {
  view.mode = view.mode === 'potential' ? 'field' : 'potential';
  saveView();
  render();
});
linesBox.addEventListener('change', () => {
  view.fieldLines = linesBox.checked;
  saveView();
  render();
});

function fileStem(): string {
  const t = (shown?.title ?? 'voltscape').replace(/[^A-Za-z0-9_-]+/g, '-').replace(/^-+|-+$/g, '');
  return t || 'voltscape';
}

svgButton.addEventListener('click', () => {
  if (!picture) return;
  host.save('svg', svgText(picture.svg), `${fileStem()}.svg`);
});
pngButton.addEventListener('click', () => {
  if (!picture) return;
  const svg = picture.svg;
  const w = Number(svg.getAttribute('width'));
  const h = Number(svg.getAttribute('height'));
  pngDataUrl(svgText(svg), w, h)
    .then((url) => host.save('png', url, `${fileStem()}.png`))
    .catch((err: unknown) => {
      problem = `Could not make the PNG: ${err instanceof Error ? err.message : String(err)}`;
      setStatus();
    });
});

// ---- the sweep ----
let sweep: SweepResultParams | null = null;
let sweepFigure: SweepFigure = 'maxField';
/** The newest document version the page has heard of (a newer one makes the sweep shown stale). */
let newestVersion = 0;

function renderSweep(): void {
  sweepEl.hidden = !sweep || sweep.state === 'none';
  if (!sweep || sweep.state === 'none') return;
  const stale = sweep.state === 'running' || newestVersion > sweep.version;
  sweepEl.dataset.stale = stale ? 'true' : 'false';
  sweepPlot.classList.toggle('stale', stale);
  const marginOption = sweepSelect.querySelector('option[value="margin"]') as HTMLOptionElement | null;
  const hasMargin = sweep.basis !== null;
  if (marginOption) marginOption.disabled = !hasMargin;
  if (sweepFigure === 'margin' && !hasMargin) sweepFigure = 'maxField';
  sweepSelect.value = sweepFigure;
  const steps = `${sweep.values.length} step${sweep.values.length === 1 ? '' : 's'}`;
  sweepStatus.classList.toggle('status-problem', sweep.state === 'failed');
  sweepStatus.textContent =
    sweep.state === 'failed'
      ? (sweep.message ?? 'The live sweep failed.')
      : sweep.state === 'running'
        ? `Sweeping ${sweep.name}…${sweep.values.length ? ' (showing the previous sweep)' : ''}`
        : stale
          ? 'Out of date: a newer version of the scene is being solved'
          : `${sweep.name}: ${steps}, coarse mesh (run \`voltscape sweep\` for the full figures)${hasMargin ? '' : '; no margin without a limit or a medium strength'}`;
  sweepPlot.replaceChildren();
  if (sweep.values.length === 0) return;
  const svg = drawSweepPlot(sweep, sweepFigure, readPalette());
  svg.style.maxWidth = `${svg.getAttribute('width')}px`;
  sweepPlot.appendChild(svg);
  host.post({
    type: 'sweepDrawn',
    version: sweep.version,
    figure: sweepFigure,
    lines: svg.querySelectorAll('path.sweep-line').length,
    points: [...svg.querySelectorAll('g.sweep-series')].map((g) => g.querySelectorAll('circle.sweep-point').length),
    stale,
  });
}

sweepSelect.addEventListener('change', () => {
  sweepFigure = sweepSelect.value as SweepFigure;
  renderSweep();
});

function onSweep(m: SweepResultParams): void {
  // Only the newest: an older version's sweep of the same document never replaces a newer one.
  if (sweep && sweep.uri === m.uri && m.version < sweep.version) return;
  if (sweep && sweep.uri !== m.uri) newestVersion = 0;
  sweep = m;
  newestVersion = Math.max(newestVersion, m.version);
  renderSweep();
}

// ---- messages ----
function show(m: Pick<PreviewShowMessage, 'title' | 'stale' | 'level' | 'result' | 'version'>): void {
  let result: Result;
  try {
    result = decodeResult(m.result);
  } catch {
    problem = 'The result could not be read; showing the last good picture.';
    setStatus();
    return;
  }
  shown = { result, title: m.title, stale: m.stale, level: m.level, version: m.version };
  solving = false;
  problem = null;
  render();
  host.post({
    type: 'drawn',
    version: m.version,
    levels: picture?.levels ?? 0,
    contours: picture ? picture.svg.querySelectorAll('path.contour').length : 0,
    stale: document.body.dataset.stale === 'true',
  });
}

const waitingStates: SolveState[] = ['queued', 'solving'];

function handle(message: ExtensionToPreviewMessage): void {
  if (!message || typeof message !== 'object') return;
  if (message.type === 'show' || message.type === 'empty') {
    // Another document (the preview follows the active editor): its sweep, if any, comes on its own.
    if (sweep && (message.type === 'empty' || sweep.uri !== message.uri)) {
      sweep = null;
      newestVersion = 0;
      renderSweep();
    }
  }
  if (message.type === 'show') show(message);
  else if (message.type === 'sweep') onSweep(message);
  else if (message.type === 'status') {
    if (typeof message.version === 'number' && message.version > newestVersion) {
      newestVersion = message.version;
      if (sweep) renderSweep();
    }
    // Solving the version already shown (the full level after a coarse one) only refines the picture.
    const refining = waitingStates.includes(message.state) && !!shown && message.version === shown.version;
    solving = waitingStates.includes(message.state) && !refining;
    if (message.state === 'failed') problem = `The solve failed${message.message ? `: ${message.message}` : ''}; showing the last good result.`;
    else if (message.state === 'limited') problem = 'The scene is over a limit and was not solved; showing the last good result.';
    else if (message.state === 'stale') problem = 'Out of date: the scene has errors; showing the last good result.';
    else if (message.state === 'done' || solving) problem = null;
    setStatus();
  } else if (message.type === 'empty') {
    titleEl.textContent = message.title;
    if (!shown) {
      figure.replaceChildren();
      htmlEl('p', { class: 'empty' }, figure, message.message);
    }
  }
}

window.addEventListener('message', (ev: MessageEvent) => handle(ev.data as ExtensionToPreviewMessage));

const embedded = document.getElementById('voltscape-data');
if (embedded?.textContent) {
  const data = JSON.parse(embedded.textContent) as { title: string; result: unknown };
  show({ title: data.title, stale: false, level: 'full', result: data.result, version: 0 });
} else {
  host.post({ type: 'ready' });
}
