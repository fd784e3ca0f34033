// peer.mjs: the benchmark's yardstick. The same closed forms as
// clearkit/core (flow.go, compare.go, sweep.go), written in plain
// JavaScript the way a page without WebAssembly would do it: read and check
// the request, evaluate both arrangements, and build the chart series the
// compare view draws. bench.mjs first checks that it gives the module's
// numbers, then times both.

const MIN_FLOW = 1e-6;
const MAX_FLOW = 1e5;
const MAX_KOA = 1e8;
const MIN_CONC = 1e-30;
const MAX_CONC = 1e9;

// number reads a request field: a number, or a string with a decimal point
// or comma; undefined, null and '' are absent.
function number(request, field, fallback) {
  let v = request[field];
  if (v === undefined || v === null || v === '') {
    if (fallback === undefined) throw fieldError(field, 'is required');
    return fallback;
  }
  if (typeof v === 'string') {
    if (!/^[+-]?([0-9]+([.,][0-9]*)?|[.,][0-9]+)([eE][+-]?[0-9]+)?$/.test(v.trim())) throw fieldError(field, 'must be a number');
    v = Number(v.trim().replace(',', '.'));
  }
  if (typeof v !== 'number' || !Number.isFinite(v)) throw fieldError(field, 'must be a finite number');
  return v;
}

function fieldError(field, message) {
  return Object.assign(new Error(message), { field });
}

function check(field, v, lo, hi) {
  if (!(v >= lo && v <= hi)) throw fieldError(field, `must be from ${lo} to ${hi}`);
}

// Effectiveness-NTU relations (Incropera & DeWitt ch. 11), counter-current
// in the phi form of core/flow.go so that QB = QD needs no branch.
export function effectiveness(counter, qb, qd, koa) {
  const cmin = Math.min(qb, qd);
  const cmax = Math.max(qb, qd);
  const ntu = koa / cmin;
  const cr = cmin / cmax;
  if (!counter) {
    if (ntu === Infinity) return 1 / (1 + cr);
    return -Math.expm1(-ntu * (1 + cr)) / (1 + cr);
  }
  if (ntu === Infinity) return 1;
  const x = ntu * ((cmax - cmin) / cmax);
  const phi = x === 0 ? 1 : -Math.expm1(-x) / x;
  const t = ntu * phi;
  return Math.min(1, t / (1 + cr * t));
}

const dialysance = (counter, qb, qd, koa) => effectiveness(counter, qb, qd, koa) * Math.min(qb, qd);

function arrangement(counter, op) {
  const d = dialysance(counter, op.qb, op.qd, op.koa);
  const f = (op.cbi - op.cdi) / op.cbi;
  const w = d * (op.cbi - op.cdi);
  const ceiling = dialysance(counter, op.qb, op.qd, Infinity);
  const ntu = op.koa / Math.min(op.qb, op.qd);
  return {
    clearance: d * f,
    dialysance: d,
    extraction_ratio: (d * f) / op.qb,
    cbo: op.cbi - w / op.qb,
    cdo: op.cdi + w / op.qd,
    transfer_rate: w,
    log_mean_difference: op.koa >= 2 ** -1022 && ntu >= 2 ** -1022 ? (op.cbi - op.cdi) * (d / op.koa) : op.cbi - op.cdi,
    clearance_ceiling: ceiling * f,
    dialysance_ceiling: ceiling,
  };
}

function series(op, axis, lo, hi, n) {
  const s = { x: [], countercurrent: [], cocurrent: [], countercurrent_ceiling: [], cocurrent_ceiling: [] };
  const f = (op.cbi - op.cdi) / op.cbi;
  const step = (hi - lo) / (n - 1);
  let { qb, qd, koa } = op;
  for (let i = 0; i < n; i++) {
    const x = i === n - 1 ? hi : lo + i * step;
    if (axis === 'qb') qb = x;
    else if (axis === 'qd') qd = x;
    else koa = x;
    s.x.push(x);
    s.countercurrent.push(dialysance(true, qb, qd, koa) * f);
    s.cocurrent.push(dialysance(false, qb, qd, koa) * f);
    s.countercurrent_ceiling.push(dialysance(true, qb, qd, Infinity) * f);
    s.cocurrent_ceiling.push(dialysance(false, qb, qd, Infinity) * f);
  }
  return s;
}

// compare answers a compare request (a plain object) as the module does,
// with the chart series when request.sweep is present (default ranges and
// 101 points; the view sends sweep: {}).
export function compare(request) {
  try {
    const op = {
      qb: number(request, 'qb'),
      qd: number(request, 'qd'),
      koa: number(request, 'koa'),
      cbi: number(request, 'cbi', 1),
      cdi: number(request, 'cdi', 0),
    };
    check('qb', op.qb, MIN_FLOW, MAX_FLOW);
    check('qd', op.qd, MIN_FLOW, MAX_FLOW);
    check('koa', op.koa, 0, MAX_KOA);
    check('cbi', op.cbi, MIN_CONC, MAX_CONC);
    check('cdi', op.cdi, 0, MAX_CONC);
    // The peer covers what the view sends by default: an aqueous solution
    // (no haematocrit) and no ultrafiltration, where the model is the
    // closed form above.
    op.qf = number(request, 'qf', 0);
    op.sieving = number(request, 'sieving', 1);
    check('sieving', op.sieving, 0, 1);
    if (op.qf !== 0) throw fieldError('qf', 'the peer covers QF = 0 only');
    for (const field of ['hct', 'plasma_water', 'red_cell_water']) {
      if (number(request, field, null) !== null) throw fieldError(field, 'the peer covers an aqueous solution only');
    }
    const cc = arrangement(true, op);
    const co = arrangement(false, op);
    const cmin = Math.min(op.qb, op.qd);
    const answer = {
      ok: true,
      input: op,
      countercurrent: cc,
      cocurrent: co,
      countercurrent_gain: cc.clearance - co.clearance,
      countercurrent_gain_percent: co.dialysance > 0 ? (100 * (cc.dialysance - co.dialysance)) / co.dialysance : 0,
      ntu: op.koa / cmin,
      flow_ratio: cmin / Math.max(op.qb, op.qd),
      qbw: op.qb, // the water flow of the blood: all of it for a solution
    };
    if (request.sweep) {
      const n = 101;
      answer.sweeps = {
        qb: series(op, 'qb', 25, Math.max(600, 2 * op.qb), n),
        qd: series(op, 'qd', 50, Math.max(1000, 2 * op.qd), n),
        koa: series(op, 'koa', 0, Math.max(2000, 2 * op.koa), n),
      };
    }
    return answer;
  } catch (err) {
    return { ok: false, error: { field: err.field ?? '', message: err.message } };
  }
}
