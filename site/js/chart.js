// chart.js: a small SVG line chart. It draws the numbers it is given and
// computes none of its own beyond placing them on the axes.

const NS = 'http://www.w3.org/2000/svg';
const BOX = { width: 640, height: 270, left: 58, right: 96, top: 14, bottom: 46 };

function el(name, attrs, text) {
  const node = document.createElementNS(NS, name);
  for (const [k, v] of Object.entries(attrs)) node.setAttribute(k, String(v));
  if (text !== undefined) node.textContent = text;
  return node;
}

// ticks returns round tick values covering [lo, hi].
function ticks(lo, hi, count = 5) {
  const raw = (hi - lo) / count || 1;
  const mag = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 2.5, 5, 10].map((m) => m * mag).find((s) => s >= raw);
  const out = [];
  const last = hi + step * 1e-9;
  for (let v = Math.ceil(lo / step) * step; v <= last; v += step) out.push(Number(v.toPrecision(12)));
  return out;
}

// axisTicks is ticks() with the last tick at or above hi, for a value axis.
function axisTicks(hi, count = 5) {
  const t = ticks(0, hi, count);
  const step = t.length > 1 ? t[1] - t[0] : hi;
  while (t[t.length - 1] < hi) t.push(Number((t[t.length - 1] + step).toPrecision(12)));
  return t;
}

// drawChart fills svg. spec: {x: [], xLabel, yLabel, series: [{values,
// className, label}], ceilings: [{values, label}], point: {x, ys: []}}.
// Optional: a series may have its own x; xRange [min, max] and yMax fix
// the axes (values beyond yMax are clipped at the top); verticals
// [{x, label}] draws vertical ceiling lines labelled at the top;
// endLabels: false leaves out the labels at the lines' right ends (and
// their margin).
export function drawChart(svg, spec) {
  svg.replaceChildren();
  const { left, top, bottom, width, height } = BOX;
  const right = spec.endLabels === false ? 16 : BOX.right;
  const plotW = width - left - right;
  const plotH = height - top - bottom;
  const xs = spec.x;
  const ceilings = spec.ceilings ?? [];
  const all = [...spec.series, ...ceilings].flatMap((s) => Array.from(s.values)); // values: any array-like
  const [xMin, xMax] = spec.xRange ?? [xs[0], xs[xs.length - 1]];
  const yTicks = axisTicks(spec.yMax ?? Math.max(...all, 1) * 1.02);
  const yMax = yTicks[yTicks.length - 1];
  const px = (x) => left + ((x - xMin) / (xMax - xMin)) * plotW;
  const py = (y) => top + plotH - (y / yMax) * plotH;

  for (const t of yTicks) {
    svg.append(el('line', { class: 'grid', x1: left, x2: left + plotW, y1: py(t), y2: py(t) }));
    svg.append(el('text', { x: left - 6, y: py(t) + 4, 'text-anchor': 'end' }, String(t)));
  }
  for (const t of ticks(xMin, xMax)) {
    svg.append(el('line', { class: 'grid', x1: px(t), x2: px(t), y1: top, y2: top + plotH }));
    svg.append(el('text', { x: px(t), y: top + plotH + 18, 'text-anchor': 'middle' }, String(t)));
  }
  svg.append(el('line', { class: 'axis', x1: left, x2: left, y1: top, y2: top + plotH }));
  svg.append(el('line', { class: 'axis', x1: left, x2: left + plotW, y1: top + plotH, y2: top + plotH }));
  svg.append(el('text', { x: left + plotW / 2, y: height - 6, 'text-anchor': 'middle' }, spec.xLabel));
  svg.append(el('text', { x: 14, y: top + plotH / 2, 'text-anchor': 'middle', transform: `rotate(-90 14 ${top + plotH / 2})` }, spec.yLabel));

  const path = (values, x = xs) => Array.from(values, (y, i) => `${i ? 'L' : 'M'}${px(x[i]).toFixed(1)} ${py(Math.min(y, yMax)).toFixed(1)}`).join('');
  const labels = [];
  for (const c of ceilings) {
    svg.append(el('path', { class: 'ceiling', d: path(c.values) }));
    labels.push({ y: py(c.values[c.values.length - 1]), text: c.label });
  }
  (spec.verticals ?? []).forEach((v, i) => {
    if (!(v.x >= xMin && v.x <= xMax)) return;
    svg.append(el('line', { class: 'ceiling', x1: px(v.x), x2: px(v.x), y1: top, y2: top + plotH, 'data-vertical': v.label }));
    svg.append(el('text', { x: px(v.x) - 4, y: top + 14 + 15 * i, 'text-anchor': 'end', class: 'vertical-label' }, v.label));
  });
  for (const s of spec.series) {
    svg.append(el('path', { class: `series ${s.className}`, d: path(s.values, s.x ?? xs), 'data-series': s.label }));
    labels.push({ y: py(s.values[s.values.length - 1]), text: s.label });
  }
  if (spec.endLabels === false) labels.length = 0;
  // Line-end labels, pushed apart so that none overlaps its neighbour.
  labels.sort((a, b) => a.y - b.y);
  let previous = -Infinity;
  for (const label of labels) {
    const y = Math.max(label.y + 4, previous + 15);
    svg.append(el('text', { x: left + plotW + 6, y, class: 'end-label' }, label.text));
    previous = y;
  }
  if (spec.point && spec.point.x >= xMin && spec.point.x <= xMax) {
    const x = px(spec.point.x);
    svg.append(el('line', { class: 'point-line', x1: x, x2: x, y1: top, y2: top + plotH }));
    for (const y of spec.point.ys) svg.append(el('circle', { class: 'point', cx: x, cy: py(Math.min(y, yMax)), r: 6 }));
  }
}
