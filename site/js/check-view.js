// check-view.js: the "Field checks" view, three checks an engineer runs in
// front of a machine: a clearance test (clearkit.check), conductivity
// dialysance (clearkit.dialysance) and timed collections of the blood pump
// and the dialysate flow (clearkit.flowcheck). Every number and every
// verdict comes from the API; this module only shows them.

import { readForm, fillForm, showError } from './form.js';
import { renderOutputs, showNumber, showSentence } from './format.js';
import { setText, setHidden, setData } from './dom.js';

// The sieving and whole-blood fields of the clearance test left blank: S 1,
// an aqueous solution. Records saved before these fields existed lack
// them, and restoring one must not keep what was typed before.
const NO_CONDITIONS = { sieving: '', hct: '', plasma_water: '', red_cell_water: '' };

// Demo values: an invented loaner machine on a bench, urea test solution
// in mg/dL, a filter rated KoA 800 mL/min.
export const DEMO = {
  clearance: {
    qb: '300', qd: '500', qf: '10', koa: '800', cbi: '100', cbo: '19', cdi: '', cdo: '46.3', ...NO_CONDITIONS,
    mass_balance_tolerance_percent: '', clearance_tolerance_percent: '',
    concentration_uncertainty_percent: '2', concentration_uncertainty_floor: '0.5', flow_uncertainty_percent: '3',
  },
  conductivity: {
    qd: '500', qf: '10', cdi1: '14.50', cdo1: '14.25', cdi2: '13.50', cdo2: '13.75', resolution: '',
    qb: '300', koa: '800', tolerance_percent: '',
  },
  blood: { measure: 'volume', set_flow: '300', seconds: '60', volume: '296', mass: '', density: '', tolerance_percent: '10' },
  dialysate: { measure: 'mass', set_flow: '500', seconds: '300', volume: '', mass: '2490', density: '0.993', tolerance_percent: '5' },
};

// Finding levels in symbols and words, so that no verdict rests on colour.
// The variation selector keeps the symbols in text style.
const LEVELS = {
  pass: { symbol: '✓', word: 'Pass' },
  note: { symbol: 'ℹ\uFE0E', word: 'Note' },
  warn: { symbol: '⚠\uFE0E', word: 'Check' },
  fail: { symbol: '✗', word: 'Fail' },
};
const RANK = { note: 0, pass: 1, warn: 2, fail: 3 };

// Labels of the verdict codes (README: check and dialysance).
const VERDICTS = {
  as_rated: 'As rated',
  below_rating: 'Below rating',
  fits_cocurrent: 'Fits co-current flow: dialysate lines reversed?',
  above_rating: 'Above rating: recheck',
  beyond_ceiling: 'Beyond what any filter gives',
  not_rated: 'Not compared with a rating',
  flow_within: 'Within tolerance',
  flow_outside: 'Outside tolerance',
};

// bannerLevel is the level the verdict banner shows: the worst finding,
// leaving notes aside unless there is nothing else.
function bannerLevel(findings) {
  let level = 'note';
  for (const f of findings) {
    if (f.level !== 'note' && (level === 'note' || RANK[f.level] > RANK[level])) level = f.level;
  }
  return level;
}

function showVerdict(banner, level, code) {
  setData(banner, 'level', level);
  setText(banner.querySelector('.verdict-symbol'), LEVELS[level].symbol);
  setText(banner.querySelector('.verdict-word'), LEVELS[level].word.toUpperCase());
  setText(banner.querySelector('.verdict-label'), VERDICTS[code] ?? '');
}

// showFindings lists the findings, one item each: an item already there is
// kept and only what differs in it is written (a keystroke mostly changes
// a number in a sentence: showSentence keeps the numbers in boxes and
// writes only them), items are added or removed at the end.
function showFindings(list, findings) {
  const items = list.children;
  while (items.length > findings.length) items[items.length - 1].remove();
  findings.forEach((f, k) => {
    let li = items[k];
    if (!li) {
      li = document.createElement('li');
      // Read out whole when a number in it changes (the results are a
      // live region, and showSentence changes only the number's box).
      li.setAttribute('aria-atomic', 'true');
      const symbol = document.createElement('span');
      symbol.className = 'finding-symbol';
      symbol.setAttribute('aria-hidden', 'true');
      const word = document.createElement('strong');
      word.className = 'finding-word';
      const text = document.createElement('span');
      text.className = 'finding-text';
      li.append(symbol, ' ', word, ' ', text);
      list.append(li);
    }
    setData(li, 'level', f.level);
    setData(li, 'code', f.code);
    setText(li.querySelector('.finding-symbol'), LEVELS[f.level].symbol);
    setText(li.querySelector('.finding-word'), `${LEVELS[f.level].word}:`);
    showSentence(li.querySelector('.finding-text'), f.text);
  });
}

// showRanges shortens a range whose low end is null or absent to one word
// (its output's data-null word, which renderOutputs shows, or a dash when
// no uncertainty was asked): the " to ..." part is hidden.
function showRanges(root) {
  for (const range of root.querySelectorAll('.range')) {
    const [low, ...rest] = range.querySelectorAll('output, .range-to');
    for (const el of rest) setHidden(el, (low.dataset.value ?? '') === '');
  }
}

// The clearance test's uncertainty fields. With ultrafiltration each of
// the 4000 Monte Carlo draws inverts the model (tens of milliseconds on a
// slow tablet), so the view asks for the check without them first and for
// the intervals LATER_MS after the last input (README, Field checks).
const UNCERTAINTY_FIELDS = ['concentration_uncertainty_percent', 'concentration_uncertainty_floor', 'flow_uncertainty_percent'];
const LATER_MS = 250;

// withoutUncertainty returns the check request without its uncertainty
// fields, or null when none is filled in (one call does it all).
function withoutUncertainty(request) {
  if (!UNCERTAINTY_FIELDS.some((f) => (request[f] ?? '') !== '')) return null;
  const first = { ...request };
  for (const f of UNCERTAINTY_FIELDS) delete first[f];
  return first;
}

// A calculation bound to one form: on every input it asks the API and
// shows the answer, or the error beside its field with the results marked
// stale. request(form) builds the request; render(results, response)
// shows the rest. With split, a request that split(request) cuts down (to
// leave out slow work) is answered in two calls: the cut one at once, the
// whole one LATER_MS after the last input, or at flush(), which
// snapshot() calls so that a record always holds the whole answer. Until
// then the results carry data-pending and aria-busy, and the outputs of
// the left-out part ([data-pending-shows]) keep what they showed, greyed
// by style.css: rewriting them (to an ellipsis, say) would change their
// width twice a keystroke and lay out the tables and grids around them
// again each time. Should the whole request then fail (an uncertainty
// field in error), those outputs go to a dash: what they kept belongs to
// earlier inputs.
function bindCalculation(engine, name, form, results, request, render, split = () => null) {
  const state = { last: null, pending: null, timer: 0 };
  const later = new Set(results.querySelectorAll('[data-pending-shows] output'));
  // show renders a response; cut says it is the answer to a cut request,
  // which leaves the outputs of the left-out part as they are.
  const show = (response, cut = false) => {
    if (!response.ok) {
      showError(form, response.error);
      results.classList.add('stale');
      results.dataset.state = 'error';
      state.last = null;
      return false;
    }
    showError(form, null);
    if (results.classList.contains('stale')) results.classList.remove('stale');
    setData(results, 'state', 'ok');
    state.last = response;
    renderOutputs(results, response, cut ? later : null);
    showRanges(results);
    render(response);
    return true;
  };
  const settle = () => {
    clearTimeout(state.timer);
    state.pending = null;
    delete results.dataset.pending;
    results.removeAttribute('aria-busy');
  };
  state.flush = () => {
    const whole = state.pending;
    if (!whole) return;
    settle();
    if (show(engine.call(name, whole))) return;
    for (const out of later) showNumber(out, undefined);
    showRanges(results);
  };
  state.update = () => {
    settle();
    const whole = request();
    const first = split(whole);
    if (!show(engine.call(name, first ?? whole), first !== null) || !first) return;
    state.pending = whole;
    results.dataset.pending = 'true';
    results.setAttribute('aria-busy', 'true');
    state.timer = setTimeout(state.flush, LATER_MS);
  };
  form.addEventListener('input', state.update);
  form.addEventListener('submit', (event) => event.preventDefault());
  return state;
}

// mountCheck wires the view in root and returns its handle (views.js):
// snapshot() gives {view, inputs, result} for the check on screen only, so
// that a service record holds what was checked: inputs {part, NAME: the
// form's texts} and result {NAME: the API response}, NAME being clearance,
// conductivity, or blood and dialysate for the timed flows (a circuit in
// error gives a null result); it is null while the check on screen cannot
// be computed. inputs() gives every check's inputs as they stand, and
// restore(inputs) takes either: it fills the checks present, shows the
// part named and recomputes.
export function mountCheck(root, engine) {
  const parts = root.querySelectorAll('.part');
  const partButtons = root.querySelectorAll('[data-part]:not(.part)');
  let part = 'clearance';

  function showPart(name) {
    part = name;
    for (const p of parts) p.hidden = p.dataset.part !== name;
    for (const b of partButtons) b.setAttribute('aria-pressed', String(b.dataset.part === name));
  }
  for (const b of partButtons) b.addEventListener('click', () => showPart(b.dataset.part));

  // Clearance test.
  const checkForm = root.querySelector('#check-form');
  const checkResults = root.querySelector('#check-results');
  const clearance = bindCalculation(engine, 'check', checkForm, checkResults, () => readForm(checkForm), (r) => {
    showVerdict(checkResults.querySelector('.verdict'), bannerLevel(r.findings), r.verdict);
    const mark = checkResults.querySelector('[data-mark="mass_balance_ok"]');
    setText(mark, r.mass_balance_ok ? `${LEVELS.pass.symbol} within` : `${LEVELS.fail.symbol} outside`);
    setData(mark, 'level', r.mass_balance_ok ? 'pass' : 'fail');
    showFindings(checkResults.querySelector('.findings'), r.findings);
    setHidden(checkResults.querySelector('#check-blood-note'), !r.input.blood);
  }, withoutUncertainty);

  // Conductivity.
  const condForm = root.querySelector('#cond-form');
  const condResults = root.querySelector('#cond-results');
  const conductivity = bindCalculation(engine, 'dialysance', condForm, condResults, () => readForm(condForm), (r) => {
    showVerdict(condResults.querySelector('.verdict'), bannerLevel(r.findings), r.verdict);
    showFindings(condResults.querySelector('.findings'), r.findings);
  });

  // Timed flows: one form per circuit, measured by volume or by weight.
  const timed = {};
  for (const card of root.querySelectorAll('.timed-card')) {
    const circuit = card.dataset.circuit;
    const form = card.querySelector('form');
    const results = card.querySelector('.results');
    const measureButtons = card.querySelectorAll('[data-measure]');
    const entry = { measure: 'volume', form };
    entry.setMeasure = (measure) => {
      entry.measure = measure;
      for (const b of measureButtons) b.setAttribute('aria-pressed', String(b.dataset.measure === measure));
      for (const m of card.querySelectorAll('[data-measure-for]')) m.hidden = m.dataset.measureFor !== measure;
    };
    const request = () => {
      const values = readForm(form);
      if (entry.measure === 'volume') {
        delete values.mass;
        delete values.density;
      } else {
        delete values.volume;
      }
      return { ...values, circuit };
    };
    entry.calc = bindCalculation(engine, 'flowcheck', form, results, request, (r) => {
      showVerdict(results.querySelector('.verdict'), bannerLevel(r.findings), r.within ? 'flow_within' : 'flow_outside');
      showFindings(results.querySelector('.findings'), r.findings);
    });
    for (const b of measureButtons) {
      b.addEventListener('click', () => {
        entry.setMeasure(b.dataset.measure);
        entry.calc.update();
      });
    }
    timed[circuit] = entry;
  }

  function fillTimed(circuit, values) {
    const { measure = 'volume', ...rest } = values;
    timed[circuit].setMeasure(measure);
    fillForm(timed[circuit].form, rest);
  }

  function fillAll(inputs) {
    if (inputs.clearance) fillForm(checkForm, { ...NO_CONDITIONS, ...inputs.clearance });
    if (inputs.conductivity) fillForm(condForm, inputs.conductivity);
    for (const circuit of Object.keys(timed)) {
      if (inputs[circuit]) fillTimed(circuit, inputs[circuit]);
    }
    updateAll();
  }

  function updateAll() {
    clearance.update();
    conductivity.update();
    for (const entry of Object.values(timed)) entry.calc.update();
  }

  for (const p of parts) {
    const demo = p.querySelector('[data-demo]');
    if (!demo) continue;
    demo.addEventListener('click', () => {
      const name = p.dataset.part;
      if (name === 'timed') fillAll({ blood: DEMO.blood, dialysate: DEMO.dialysate });
      else fillAll({ [name]: DEMO[name] });
    });
  }

  // The inputs of one check, or of all; timed-flow inputs carry their
  // measure (volume or mass).
  const inputsOf = {
    clearance: () => ({ clearance: readForm(checkForm) }),
    conductivity: () => ({ conductivity: readForm(condForm) }),
    timed: () => Object.fromEntries(Object.entries(timed).map(([c, e]) => [c, { measure: e.measure, ...readForm(e.form) }])),
  };
  const resultOf = {
    clearance: () => {
      clearance.flush();
      return clearance.last ? { clearance: clearance.last } : null;
    },
    conductivity: () => (conductivity.last ? { conductivity: conductivity.last } : null),
    timed: () => (timed.blood.calc.last || timed.dialysate.calc.last
      ? { blood: timed.blood.calc.last, dialysate: timed.dialysate.calc.last }
      : null),
  };

  fillAll(DEMO);
  return {
    name: 'check',
    snapshot() {
      const result = resultOf[part]();
      return result ? { view: 'check', inputs: { part, ...inputsOf[part]() }, result } : null;
    },
    inputs: () => ({ part, ...inputsOf.clearance(), ...inputsOf.conductivity(), ...inputsOf.timed() }),
    restore(inputs) {
      if (inputs && inputsOf[inputs.part]) showPart(inputs.part);
      fillAll(inputs || {});
    },
  };
}
