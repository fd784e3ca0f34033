// compare-view.js: the "Compare flows" view. One API call per input gives
// both arrangements and every chart series.

import { readForm, fillForm, showError } from './form.js';
import { renderOutputs } from './format.js';
import { drawChart } from './chart.js';

// The ultrafiltration and whole-blood fields left blank: QF 0, S 1, an
// aqueous solution. Records saved before these fields existed lack them,
// and restore() must not keep what was typed before.
const NO_CONDITIONS = { qf: '', sieving: '', hct: '', plasma_water: '', red_cell_water: '' };

// Demo values: an invented bench check at a home-care client, aqueous
// solution, no ultrafiltration.
export const DEMO = { qb: '300', qd: '500', koa: '800', cbi: '', cdi: '', ...NO_CONDITIONS };

const AXES = {
  qb: { title: 'Clearance against blood flow', label: 'Blood flow QB (mL/min)' },
  qd: { title: 'Clearance against dialysate flow', label: 'Dialysate flow QD (mL/min)' },
  koa: { title: 'Clearance against filter KoA', label: 'KoA (mL/min)' },
};

function withoutSweeps(response) {
  const { sweeps, ...rest } = response;
  return rest;
}

// mountCompare wires the view in root and returns its handle for main.js:
// snapshot() gives {view, inputs, result} for the last valid calculation
// (null while an input is in error); restore(inputs) refills and recomputes;
// inputs() gives the inputs as they stand.
export function mountCompare(root, engine) {
  const form = root.querySelector('form');
  const results = root.querySelector('.results');
  const chart = root.querySelector('svg.chart');
  const caption = root.querySelector('figcaption');
  const axisButtons = root.querySelectorAll('[data-axis]');
  const bloodNote = root.querySelector('#compare-blood-note');
  const reverseNote = root.querySelector('#compare-reverse-note');
  let axis = 'qb';
  let last = null;

  function draw() {
    if (!last) return;
    const s = last.sweeps[axis];
    if (caption.textContent !== AXES[axis].title) caption.textContent = AXES[axis].title;
    drawChart(chart, {
      x: s.x,
      xLabel: AXES[axis].label,
      yLabel: 'Clearance K (mL/min)',
      series: [
        { values: s.countercurrent, className: 'series-counter', label: 'counter' },
        { values: s.cocurrent, className: 'series-co', label: 'co' },
      ],
      ceilings: [
        { values: s.countercurrent_ceiling, label: 'counter max' },
        { values: s.cocurrent_ceiling, label: 'co max' },
      ],
      point: { x: last.input[axis], ys: [last.countercurrent.clearance, last.cocurrent.clearance] },
    });
  }

  // showState marks the results ok, or in error and stale. It writes only
  // a change: an input that keeps the state leaves the container alone.
  function showState(state) {
    if (results.dataset.state === state) return;
    results.dataset.state = state;
    results.classList.toggle('stale', state === 'error');
  }

  function update() {
    const response = engine.call('compare', { ...readForm(form), sweep: {} });
    if (!response.ok) {
      showError(form, response.error);
      showState('error');
      return;
    }
    showError(form, null);
    showState('ok');
    last = response;
    renderOutputs(results, response);
    if (bloodNote.hidden === Boolean(response.input.blood)) bloodNote.hidden = !response.input.blood;
    const reverse = response.input.cdi > response.input.cbi;
    if (reverseNote.hidden === reverse) reverseNote.hidden = !reverse;
    draw();
  }

  form.addEventListener('input', update);
  form.addEventListener('submit', (event) => event.preventDefault());
  root.querySelector('#compare-demo').addEventListener('click', () => {
    fillForm(form, DEMO);
    update();
  });
  for (const button of axisButtons) {
    button.addEventListener('click', () => {
      axis = button.dataset.axis;
      for (const b of axisButtons) b.setAttribute('aria-pressed', String(b === button));
      draw();
    });
  }
  fillForm(form, DEMO);
  update();
  return {
    name: 'compare',
    // The result kept in a record leaves out the chart series (recomputed
    // from the inputs when the record is opened).
    snapshot: () => (results.dataset.state === 'ok' && last ? { view: 'compare', inputs: readForm(form), result: withoutSweeps(last) } : null),
    inputs: () => readForm(form),
    restore(inputs) {
      fillForm(form, { ...NO_CONDITIONS, ...inputs });
      update();
    },
  };
}
