// chart.js: a small SVG line chart. It draws the numbers it is given and
// computes none of its own beyond placing them on the axes.
//
// A redraw keeps the chart's elements and changes only what differs: grid
// lines, tick labels, axis titles, lines (one <path> each), labels and
// markers get new attributes or text only where a value moved, and
// elements are added or removed only when their number changes (more or
// fewer ticks, say). A series is any array-like of numbers (an Array or a
// Float64Array: only indexing and length are used).

import { setText } from './dom.js';

const NS = 'http://www.w3.org/2000/svg';
const BOX = { width: 640, height: 270, left: 58, right: 96, top: 14, bottom: 46 };

// The chart's layers, in painting order: each is a <g> made once.
const LAYERS = ['grid', 'ticks', 'axes', 'titles', 'ceilings', 'vertical-lines', 'vertical-labels', 'series', 'end-labels', 'point-line', 'points'];
const drawn = new WeakMap(); // svg -> {layers, keys}: its layers, and what its parts were drawn from

// set gives node the attributes in attrs that differ from what it has.
// Numbers are coordinates, written to a tenth of a unit (of 640).
function set(node, attrs) {
  for (const [k, v] of Object.entries(attrs)) {
    const text = typeof v === 'number' ? tenths(v) : v;
    if (node.getAttribute(k) !== text) node.setAttribute(k, text);
  }
}

// children returns group's first count children, all of element name,
// making or removing elements as needed.
function children(group, count, name) {
  while (group.childElementCount > count) group.lastElementChild.remove();
  while (group.childElementCount < count) group.append(document.createElementNS(NS, name));
  return group.children;
}

// layersOf returns svg's layers by name, made the first time (which also
// clears what an earlier version of the page drew there).
function layersOf(svg) {
  let layers = drawn.get(svg);
  if (layers) return layers;
  layers = {};
  for (const name of LAYERS) {
    layers[name] = document.createElementNS(NS, 'g');
    layers[name].dataset.layer = name;
  }
  svg.replaceChildren(...Object.values(layers));
  drawn.set(svg, { layers, keys: {} });
  return drawn.get(svg);
}

// unchanged tells whether the part name of a chart was last drawn from
// key (a string of everything that part is drawn from), and records key.
// A part drawn again from the same key is left as it is: a new target on
// the size chart moves only its marker, and setting the frame's forty
// attributes and texts to what they are took a millisecond at 4x throttle.
function unchanged(chart, name, key) {
  if (chart.keys[name] === key) return true;
  chart.keys[name] = key;
  return false;
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

// axisTicks is ticks() with the first tick at or below lo and the last at
// or above hi, for a value axis.
function axisTicks(lo, hi, count = 5) {
  const t = ticks(lo, hi, count);
  const step = t.length > 1 ? t[1] - t[0] : hi - lo;
  while (t[0] > lo) t.unshift(Number((t[0] - step).toPrecision(12)));
  while (t[t.length - 1] < hi) t.push(Number((t[t.length - 1] + step).toPrecision(12)));
  return t;
}

// tenths writes v to one decimal, as v.toFixed(1) does (bar the rounding
// of exact halves) but several times faster: a line of 101 points has 202.
function tenths(v) {
  const t = Math.round(v * 10);
  const a = Math.abs(t);
  const text = `${(a - (a % 10)) / 10}.${a % 10}`;
  return t < 0 ? `-${text}` : text;
}

// smallest returns the smallest value of the lines, at most 0.
function smallest(lines) {
  let m = 0;
  for (const line of lines) {
    const v = line.values;
    for (let i = 0; i < v.length; i++) if (v[i] < m) m = v[i];
  }
  return m;
}

// largest returns the largest value of the lines, at least floor.
function largest(lines, floor) {
  let m = floor;
  for (const line of lines) {
    const v = line.values;
    for (let i = 0; i < v.length; i++) if (v[i] > m) m = v[i];
  }
  return m;
}

// drawFrame draws the grid, tick labels, axes and axis titles.
function drawFrame(layers, f) {
  const { left, top, plotW, plotH, px, py, yTicks, xTicks } = f;
  const n = yTicks.length;
  const grid = children(layers.grid, n + xTicks.length, 'line');
  const labels = children(layers.ticks, n + xTicks.length, 'text');
  yTicks.forEach((t, i) => {
    set(grid[i], { class: 'grid', x1: left, x2: left + plotW, y1: py(t), y2: py(t) });
    set(labels[i], { x: left - 6, y: py(t) + 4, 'text-anchor': 'end' });
    setText(labels[i], String(t));
  });
  xTicks.forEach((t, i) => {
    set(grid[n + i], { class: 'grid', x1: px(t), x2: px(t), y1: top, y2: top + plotH });
    set(labels[n + i], { x: px(t), y: top + plotH + 18, 'text-anchor': 'middle' });
    setText(labels[n + i], String(t));
  });
  const [yAxis, xAxis] = children(layers.axes, 2, 'line');
  set(yAxis, { class: 'axis', x1: left, x2: left, y1: top, y2: top + plotH });
  set(xAxis, { class: 'axis', x1: left, x2: left + plotW, y1: top + plotH, y2: top + plotH });
  const [xTitle, yTitle] = children(layers.titles, 2, 'text');
  set(xTitle, { x: left + plotW / 2, y: BOX.height - 6, 'text-anchor': 'middle' });
  setText(xTitle, f.xLabel);
  set(yTitle, { x: 14, y: top + plotH / 2, 'text-anchor': 'middle', transform: `rotate(-90 14 ${top + plotH / 2})` });
  setText(yTitle, f.yLabel);
}

// What each line's d was drawn from: its values, its x and the axes'
// scale. A line whose numbers and scale are those it was drawn from keeps
// its d without the string being built again (a new QB on the QB chart
// moves only the marker, and a line is 101 points).
const lineSources = new WeakMap();

function sameNumbers(a, b) {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) return false;
  return true;
}

// drawLine sets node's d to path(values, x) unless it was drawn from the
// same numbers on the same scale.
function drawLine(node, values, x, scale, path) {
  const was = lineSources.get(node);
  if (was && Object.keys(scale).every((k) => was[k] === scale[k]) && sameNumbers(was.values, values) && sameNumbers(was.x, x)) return;
  set(node, { d: path(values, x) });
  // Copies: a caller may change its arrays in place and draw again.
  lineSources.set(node, { ...scale, values: Array.from(values), x: Array.from(x) });
}

// drawChart draws spec into svg. spec: {x, xLabel, yLabel, series:
// [{values, className, label}], ceilings: [{values, label}], point: {x,
// ys: []}}, where x and values are array-likes of numbers. Optional: a
// series may have its own x; xRange [min, max] and yMax fix the axes
// (values beyond yMax are clipped at the top; without yMax, the value axis
// reaches below 0 when a line does); verticals [{x, label}] draws
// vertical ceiling lines labelled at the top; endLabels: false leaves out
// the labels at the lines' right ends (and their margin).
export function drawChart(svg, spec) {
  const chart = layersOf(svg);
  const { layers } = chart;
  const { left, top, bottom, width, height } = BOX;
  const right = spec.endLabels === false ? 16 : BOX.right;
  const plotW = width - left - right;
  const plotH = height - top - bottom;
  const xs = spec.x;
  const ceilings = spec.ceilings ?? [];
  const [xMin, xMax] = spec.xRange ?? [xs[0], xs[xs.length - 1]];
  // The value axis starts at 0, or below it when a line goes negative
  // (clearance with the dialysate inlet above the blood inlet).
  const lines = [...spec.series, ...ceilings];
  const low = spec.yMax === undefined ? smallest(lines) * 1.02 : 0;
  const yTicks = axisTicks(low, spec.yMax ?? largest(lines, low < 0 ? 0 : 1) * 1.02);
  const yMin = yTicks[0];
  const yMax = yTicks[yTicks.length - 1];
  const px = (x) => left + ((x - xMin) / (xMax - xMin)) * plotW;
  const py = (y) => top + plotH - ((Math.min(Math.max(y, yMin), yMax) - yMin) / (yMax - yMin)) * plotH;

  const xTicks = ticks(xMin, xMax);
  if (!unchanged(chart, 'frame', [left, top, plotW, plotH, xMin, xMax, yTicks, xTicks, spec.xLabel, spec.yLabel].join('|'))) {
    drawFrame(layers, { left, top, plotW, plotH, px, py, yTicks, xTicks, xLabel: spec.xLabel, yLabel: spec.yLabel });
  }

  const scale = { left, top, plotW, plotH, xMin, xMax, yMin, yMax }; // all that places a point
  const path = (values, x) => {
    let d = '';
    for (let i = 0; i < values.length; i++) d += `${i ? 'L' : 'M'}${tenths(px(x[i]))} ${tenths(py(values[i]))}`;
    return d;
  };
  const labels = [];
  const ceilingPaths = children(layers.ceilings, ceilings.length, 'path');
  ceilings.forEach((c, i) => {
    set(ceilingPaths[i], { class: 'ceiling' });
    drawLine(ceilingPaths[i], c.values, xs, scale, path);
    labels.push({ y: py(c.values[c.values.length - 1]), text: c.label });
  });

  const verticals = (spec.verticals ?? []).map((v, i) => ({ ...v, i })).filter((v) => v.x >= xMin && v.x <= xMax);
  if (!unchanged(chart, 'verticals', [left, top, plotW, plotH, xMin, xMax, ...verticals.flatMap((v) => [v.x, v.i, v.label])].join('|'))) {
    const verticalLines = children(layers['vertical-lines'], verticals.length, 'line');
    const verticalLabels = children(layers['vertical-labels'], verticals.length, 'text');
    verticals.forEach((v, k) => {
      const x = px(v.x);
      set(verticalLines[k], { class: 'ceiling', x1: x, x2: x, y1: top, y2: top + plotH, 'data-vertical': v.label });
      set(verticalLabels[k], { x: x - 4, y: top + 14 + 15 * v.i, 'text-anchor': 'end', class: 'vertical-label' });
      setText(verticalLabels[k], v.label);
    });
  }

  const seriesPaths = children(layers.series, spec.series.length, 'path');
  spec.series.forEach((s, i) => {
    set(seriesPaths[i], { class: `series ${s.className}`, 'data-series': s.label });
    drawLine(seriesPaths[i], s.values, s.x ?? xs, scale, path);
    labels.push({ y: py(s.values[s.values.length - 1]), text: s.label });
  });

  if (spec.endLabels === false) labels.length = 0;
  // Line-end labels, pushed apart so that none overlaps its neighbour.
  labels.sort((a, b) => a.y - b.y);
  if (!unchanged(chart, 'end-labels', [left, plotW, ...labels.flatMap((l) => [l.y, l.text])].join('|'))) {
    const endLabels = children(layers['end-labels'], labels.length, 'text');
    let previous = -Infinity;
    labels.forEach((label, i) => {
      const y = Math.max(label.y + 4, previous + 15);
      set(endLabels[i], { x: left + plotW + 6, y, class: 'end-label' });
      setText(endLabels[i], label.text);
      previous = y;
    });
  }

  const point = spec.point && spec.point.x >= xMin && spec.point.x <= xMax ? spec.point : null;
  const pointLine = children(layers['point-line'], point ? 1 : 0, 'line');
  const points = children(layers.points, point ? point.ys.length : 0, 'circle');
  if (point) {
    const x = px(point.x);
    set(pointLine[0], { class: 'point-line', x1: x, x2: x, y1: top, y2: top + plotH });
    point.ys.forEach((y, i) => set(points[i], { class: 'point', cx: x, cy: py(y), r: 6 }));
  }
}
