// size-view.js: the "Size a filter" view. One API call per input gives the
// required KoA and area in both arrangements, the pick from the filters on
// hand, the flows the filter in use needs and the chart series.

import { readForm, fillForm, showError } from './form.js';
import { renderOutputs, formatNumber, showNumber, showSentence } from './format.js';
import { setText, setHidden, setData } from './dom.js';
import { drawChart } from './chart.js';

// The ultrafiltration and whole-blood fields left blank: QF 0, S 1, an
// aqueous solution. Records saved before these fields existed lack them,
// and restore() must not keep what was typed before.
const NO_CONDITIONS = { qf: '', sieving: '', hct: '', plasma_water: '', red_cell_water: '' };

// Demo values: an invented request from a satellite unit. The filters on
// the shelf are named by their area only.
export const DEMO = {
  target_clearance: '250', qb: '300', qd: '500', flow: 'countercurrent', ...NO_CONDITIONS,
  k0: '0.05', margin_percent: '10', 'reference.koa': '', 'reference.area_m2': '',
  'current_filter.koa': '700', 'current_filter.area_m2': '',
  'qd_range.min': '300', 'qd_range.max': '800', 'qb_range.min': '150', 'qb_range.max': '450',
  filters: [
    { label: 'Shelf A', area_m2: '1.4', koa: '' },
    { label: 'Shelf B', area_m2: '1.8', koa: '' },
    { label: 'Shelf C', area_m2: '2.1', koa: '' },
  ],
};

const PARTS = ['label', 'area_m2', 'koa'];

// mountSize wires the view in root and returns its handle for main.js:
// snapshot() gives {view, inputs, result} for the last valid calculation
// (null while an input is in error); restore(inputs) refills and recomputes.
export function mountSize(root, engine) {
  const form = root.querySelector('#size-form');
  const filterForm = root.querySelector('#size-filters');
  const rowsList = filterForm.querySelector('.filter-rows');
  const rowTemplate = root.querySelector('#size-filter-row');
  const results = root.querySelector('.results');
  const chart = root.querySelector('svg.chart');
  const caption = root.querySelector('#size-chart-title');
  const flowInput = form.querySelector('input[name="flow"]');
  const flowButtons = form.querySelectorAll('[data-flow]');
  const bloodNote = root.querySelector('#size-blood-note');
  let last = null;
  let sent = []; // sent[k] is the row index of filters[k] in the last request

  // Filter rows. Input names follow the API's paths, filters[i].part, with
  // i the row's position; they are renumbered when a row goes.
  function rows() {
    return [...rowsList.children];
  }
  function renumber() {
    rows().forEach((row, i) => {
      for (const part of PARTS) {
        row.querySelector(`[data-part="${part}"]`).name = `filters[${i}].${part}`;
        row.querySelector(`[data-error-part="${part}"]`).dataset.errorFor = `filters[${i}].${part}`;
      }
      row.querySelector('[data-remove]').setAttribute('aria-label', `Remove filter ${i + 1}`);
    });
  }
  function addRow(values = {}) {
    const row = rowTemplate.content.firstElementChild.cloneNode(true);
    for (const part of PARTS) row.querySelector(`[data-part="${part}"]`).value = String(values?.[part] ?? '');
    row.querySelector('[data-remove]').addEventListener('click', () => {
      row.remove();
      renumber();
      update();
    });
    rowsList.append(row);
    renumber();
    return row;
  }
  // setRows replaces the rows; anything but a list (a record from another
  // version, say) gives none.
  function setRows(list) {
    rowsList.replaceChildren();
    if (Array.isArray(list)) for (const values of list) addRow(values);
  }
  function rowValues() {
    return rows().map((row) => Object.fromEntries(PARTS.map((part) => [part, row.querySelector(`[data-part="${part}"]`).value.trim()])));
  }

  function setFlow(flow) {
    flowInput.value = flow;
    for (const b of flowButtons) b.setAttribute('aria-pressed', String(b.dataset.flow === flow));
  }

  // inputs is everything typed: the form's fields by name and the rows.
  function inputs() {
    return { ...readForm(form), filters: rowValues() };
  }

  // request builds the API request from the inputs: empty optional groups
  // are left out, and so are filter rows with nothing typed in them.
  function request(v) {
    const req = {
      target_clearance: v.target_clearance, qb: v.qb, qd: v.qd, flow: v.flow,
      qf: v.qf, sieving: v.sieving, hct: v.hct, plasma_water: v.plasma_water, red_cell_water: v.red_cell_water,
      k0: v.k0, margin_percent: v.margin_percent, sweep: {},
    };
    const any = (...names) => names.some((n) => v[n] !== '');
    if (any('reference.koa', 'reference.area_m2')) req.reference = { koa: v['reference.koa'], area_m2: v['reference.area_m2'] };
    if (any('current_filter.koa', 'current_filter.area_m2')) {
      req.current_filter = { koa: v['current_filter.koa'], area_m2: v['current_filter.area_m2'] };
    }
    for (const name of ['qd_range', 'qb_range']) {
      if (any(`${name}.min`, `${name}.max`)) req[name] = [v[`${name}.min`], v[`${name}.max`]];
    }
    sent = [];
    const filters = [];
    v.filters.forEach((f, i) => {
      if (PARTS.some((p) => f[p] !== '')) {
        sent.push(i);
        filters.push(f);
      }
    });
    if (filters.length) req.filters = filters;
    return req;
  }

  // showFailure puts an error beside its field: a filter's fields are
  // named by their place in the request, filters[k], and shown on row
  // sent[k].
  function showFailure(error) {
    showError(form, null);
    showError(filterForm, null);
    if (!error) return;
    const m = /^filters\[(\d+)\](.*)$/.exec(error.field ?? '');
    if (m) {
      showError(filterForm, { ...error, field: `filters[${sent[Number(m[1])]}]${m[2]}` });
    } else if ((error.field ?? '').startsWith('filters')) {
      showError(filterForm, error);
    } else {
      showError(form, error);
    }
  }

  function renderCards(r) {
    for (const name of ['countercurrent', 'cocurrent']) {
      const card = root.querySelector(`.card[data-arrangement="${name}"]`);
      setData(card, 'reachable', String(r[name].reachable));
      showSentence(card.querySelector('[data-message-for]'), r[name].reachable ? '' : `Out of reach: the target ${r[name].message}.`);
      setHidden(card.querySelector('[data-used]'), r.flow !== name);
    }
  }

  function renderChoice(r) {
    const panel = root.querySelector('#size-choice');
    const verdict = panel.querySelector('[data-choice-verdict]');
    setHidden(panel.querySelector('[data-needs-area]'), r.k0 == null);
    const byRow = new Map(sent.map((row, k) => [row, k]));
    rows().forEach((row, i) => {
      const fit = r.choice && byRow.has(i) ? r.choice.filters[byRow.get(i)] : null;
      for (const out of row.querySelectorAll('output[data-fit]')) {
        const value = fit ? fit[out.dataset.fit] : undefined;
        showNumber(out, value, Number(out.dataset.digits), { signed: out.hasAttribute('data-signed') });
      }
      // A filter that reaches the target but not the margin on KoA is
      // "below margin", not short of the target.
      const chosen = fit && r.choice.chosen === byRow.get(i);
      let state = '';
      if (fit) state = chosen ? 'chosen' : fit.meets ? 'meets' : fit.clearance_gap >= 0 ? 'margin' : 'short';
      setData(row, 'fit', state);
      setText(row.querySelector('[data-fit-verdict]'), { '': '', chosen: 'Chosen', meets: 'Meets', margin: 'Below margin', short: 'Short' }[state]);
    });
    if (!r.choice) {
      setText(verdict, 'List the filters on hand to pick one.');
    } else if (r.choice.chosen == null) {
      setText(verdict, 'None of them meets the target with this margin.');
    } else {
      setText(verdict, `Smallest that meets it: ${r.choice.filters[r.choice.chosen].label}.`);
    }
  }

  function renderCurrent(r) {
    const panel = root.querySelector('#size-current');
    const c = r.current_filter;
    setHidden(panel.querySelector('[data-current-none]'), Boolean(c));
    setHidden(panel.querySelector('[data-current-some]'), !c);
    for (const name of ['qd', 'qb']) {
      const note = panel.querySelector(`[data-solve-note="${name}"]`);
      const s = c && c[name];
      const flow = name.toUpperCase();
      let text = '';
      if (s && !s.ok) {
        // The API's message follows the field it names: a range, or the
        // filter in use.
        const m = s.error.message;
        text = s.error.field === 'current_filter' ? `The filter in use ${m}.` : `${m.charAt(0).toUpperCase()}${m.slice(1)}.`;
      } else if (s && s.at_minimum) {
        text = `${flow}: the lowest settable ${flow}, ${formatNumber(s.flow, 1)} mL/min, already reaches the target.`;
      }
      showSentence(note, text); // its numbers follow the target: in boxes
      setData(note, 'state', !s ? '' : s.ok ? 'ok' : 'error');
    }
  }

  function draw(r) {
    const useArea = r.k0 != null;
    const key = useArea ? 'area_m2' : 'koa';
    const sw = r.sweep;
    setText(caption, useArea ? 'Membrane area needed against target clearance' : 'KoA needed against target clearance (enter K0 for areas)');
    const ceilings = { countercurrent: r.countercurrent.clearance_ceiling, cocurrent: r.cocurrent.clearance_ceiling };
    const ys = ['countercurrent', 'cocurrent'].filter((a) => r[a].reachable).map((a) => r[a][key]);
    drawChart(chart, {
      xRange: [0, ceilings.countercurrent * 1.04],
      yMax: useArea ? sw.area_m2_max : sw.koa_max,
      xLabel: 'Target clearance K (mL/min)',
      yLabel: useArea ? 'Membrane area (m²)' : 'KoA (mL/min)',
      series: [
        { x: sw.countercurrent.target, values: sw.countercurrent[key], className: 'series-counter', label: 'counter' },
        { x: sw.cocurrent.target, values: sw.cocurrent[key], className: 'series-co', label: 'co' },
      ],
      verticals: [
        { x: ceilings.countercurrent, label: `counter max ${formatNumber(ceilings.countercurrent, 1)}` },
        { x: ceilings.cocurrent, label: `co max ${formatNumber(ceilings.cocurrent, 1)}` },
      ],
      point: { x: r.input.target_clearance, ys },
      endLabels: false,
    });
  }

  function update() {
    const response = engine.call('size', request(inputs()));
    if (!response.ok) {
      showFailure(response.error);
      results.classList.add('stale');
      results.dataset.state = 'error';
      return;
    }
    showFailure(null);
    if (results.classList.contains('stale')) results.classList.remove('stale');
    setData(results, 'state', 'ok');
    last = response;
    renderOutputs(results, response);
    setHidden(bloodNote, !response.input.blood);
    renderCards(response);
    renderChoice(response);
    renderCurrent(response);
    draw(response);
  }

  function fill(values) {
    fillForm(form, values);
    setFlow(values.flow === 'cocurrent' ? 'cocurrent' : 'countercurrent');
    setRows(values.filters);
    // Optional groups with something in them are shown open, so that no
    // value that changes the answer is hidden.
    for (const details of form.querySelectorAll('details')) {
      if ([...details.querySelectorAll('input')].some((i) => i.value.trim() !== '')) details.open = true;
    }
  }

  form.addEventListener('input', update);
  filterForm.addEventListener('input', update);
  for (const f of [form, filterForm]) f.addEventListener('submit', (event) => event.preventDefault());
  for (const b of flowButtons) {
    b.addEventListener('click', () => {
      setFlow(b.dataset.flow);
      update();
    });
  }
  root.querySelector('#size-add-filter').addEventListener('click', () => {
    addRow().querySelector('[data-part="label"]').focus();
    update();
  });
  root.querySelector('#size-demo').addEventListener('click', () => {
    fill(DEMO);
    update();
  });
  fill(DEMO);
  update();
  // The result kept in a record leaves out the chart series (recomputed
  // from the inputs when the record is opened).
  const withoutSweep = ({ sweep, ...rest }) => rest;
  return {
    name: 'size',
    snapshot: () => (results.dataset.state === 'ok' && last ? { view: 'size', inputs: inputs(), result: withoutSweep(last) } : null),
    inputs,
    restore(values) {
      fill({ ...NO_CONDITIONS, ...values });
      update();
    },
  };
}
