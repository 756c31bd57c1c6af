/**
 * Parallel coordinates of the front in the HTML report, with brushing: drag along an axis to select
 * a range, and the front table shows only the designs inside every selected range. The static charts
 * are Vega-Lite rendered to SVG in Node, which cannot react in the page; this one chart is therefore
 * drawn by this small page script from the JSON in <script id="parallel-data"> (see parallelData in
 * report.ts). Objective axes put the better end on top.
 */
export const PARALLEL_SCRIPT = `
(function () {
  var holder = document.getElementById('parallel');
  var source = document.getElementById('parallel-data');
  if (!holder || !source) return;
  var data = JSON.parse(source.textContent);
  var axes = data.axes, rows = data.rows;
  var table = document.getElementById('front-table');
  var status = document.getElementById('selection-status');
  var NS = 'http://www.w3.org/2000/svg';
  var width = Math.max(640, Math.min(1180, 130 * axes.length)), height = 320, top = 58, bottom = 34, left = 70, right = 70;
  var step = axes.length > 1 ? (width - left - right) / (axes.length - 1) : 0;
  var span = height - top - bottom;
  var ranges = axes.map(function (axis, k) {
    var lo = Infinity, hi = -Infinity;
    rows.forEach(function (r) { var v = r.values[k]; if (v !== null) { lo = Math.min(lo, v); hi = Math.max(hi, v); } });
    if (!(lo <= hi)) { lo = 0; hi = 1; }
    if (hi === lo) { hi = lo + 0.5; lo = lo - 0.5; }
    return [lo, hi];
  });
  function x(k) { return left + k * step; }
  function fraction(k, v) { var t = (v - ranges[k][0]) / (ranges[k][1] - ranges[k][0]); return axes[k].sense === 'min' ? 1 - t : t; }
  function y(k, v) { return top + (1 - fraction(k, v)) * span; }
  function valueAt(k, py) {
    var t = 1 - (py - top) / span;
    if (axes[k].sense === 'min') t = 1 - t;
    return ranges[k][0] + t * (ranges[k][1] - ranges[k][0]);
  }
  function el(name, attributes, parent) {
    var node = document.createElementNS(NS, name);
    Object.keys(attributes).forEach(function (key) { node.setAttribute(key, attributes[key]); });
    if (parent) parent.appendChild(node);
    return node;
  }
  function text(content, attributes, parent) { var node = el('text', attributes, parent); node.textContent = content; return node; }
  function fmt(v) { return String(Number(v.toPrecision(4))); }
  var svg = el('svg', { viewBox: '0 0 ' + width + ' ' + height, width: width, height: height, role: 'img', 'aria-label': 'parallel coordinates of the front designs' });
  var lineGroup = el('g', { 'class': 'pc-lines' }, svg);
  var lines = rows.map(function (r) {
    var d = '', pen = false;
    r.values.forEach(function (v, k) {
      if (v === null) { pen = false; return; }
      d += (pen ? ' L' : ' M') + x(k).toFixed(1) + ' ' + y(k, v).toFixed(1);
      pen = true;
    });
    var line = el('path', { d: d.trim(), 'class': 'pc-line' + (r.representative ? ' rep' : ''), 'data-id': r.id }, lineGroup);
    el('title', {}, line).textContent = 'design ' + r.id;
    return line;
  });
  lines.forEach(function (line, i) { if (rows[i].representative) lineGroup.appendChild(line); });
  var brushes = {};
  var brushRects = [];
  axes.forEach(function (axis, k) {
    var g = el('g', { 'class': 'pc-axis' }, svg);
    el('line', { x1: x(k), x2: x(k), y1: top, y2: top + span }, g);
    text(axis.label, { x: x(k), y: 16, 'class': 'pc-label' }, g);
    text((axis.unit ? axis.unit : '') + (axis.sense === 'none' ? '' : (axis.unit ? ', ' : '') + 'better ↑'), { x: x(k), y: 30, 'class': 'pc-unit' }, g);
    var topValue = axis.sense === 'min' ? ranges[k][0] : ranges[k][1];
    var bottomValue = axis.sense === 'min' ? ranges[k][1] : ranges[k][0];
    text(fmt(topValue), { x: x(k), y: top - 6, 'class': 'pc-tick' }, g);
    text(fmt(bottomValue), { x: x(k), y: top + span + 16, 'class': 'pc-tick' }, g);
    brushRects[k] = el('rect', { x: x(k) - 9, width: 18, y: top, height: 0, 'class': 'pc-brush' }, g);
    var hit = el('rect', { x: x(k) - 14, width: 28, y: top - 2, height: span + 4, 'class': 'pc-hit', 'data-axis': k }, g);
    hit.addEventListener('pointerdown', function (event) { startBrush(k, event); });
  });
  holder.appendChild(svg);
  function pointerY(event) { var box = svg.getBoundingClientRect(); return (event.clientY - box.top) * (height / box.height); }
  function clamp(py) { return Math.max(top, Math.min(top + span, py)); }
  var dragging = null;
  function startBrush(k, event) {
    event.preventDefault();
    dragging = { axis: k, from: clamp(pointerY(event)), to: clamp(pointerY(event)) };
    window.addEventListener('pointermove', moveBrush);
    window.addEventListener('pointerup', endBrush);
  }
  function moveBrush(event) {
    if (!dragging) return;
    dragging.to = clamp(pointerY(event));
    var a = Math.min(dragging.from, dragging.to), b = Math.max(dragging.from, dragging.to);
    brushRects[dragging.axis].setAttribute('y', a);
    brushRects[dragging.axis].setAttribute('height', b - a);
  }
  function endBrush(event) {
    window.removeEventListener('pointermove', moveBrush);
    window.removeEventListener('pointerup', endBrush);
    if (!dragging) return;
    moveBrush(event);
    var k = dragging.axis, a = Math.min(dragging.from, dragging.to), b = Math.max(dragging.from, dragging.to);
    dragging = null;
    if (b - a < 3) {
      delete brushes[k];
      brushRects[k].setAttribute('height', 0);
    } else {
      var v1 = valueAt(k, a), v2 = valueAt(k, b);
      brushes[k] = [Math.min(v1, v2), Math.max(v1, v2)];
    }
    apply();
  }
  function apply() {
    var keys = Object.keys(brushes);
    var shown = 0;
    var visible = {};
    rows.forEach(function (r, i) {
      var ok = keys.every(function (k) { var v = r.values[k]; return v !== null && v >= brushes[k][0] && v <= brushes[k][1]; });
      visible[r.id] = ok;
      if (ok) shown++;
      lines[i].setAttribute('class', 'pc-line' + (r.representative ? ' rep' : '') + (ok ? '' : ' dim'));
    });
    if (table) Array.prototype.forEach.call(table.tBodies[0].rows, function (tr) { tr.style.display = visible[tr.getAttribute('data-id')] === false ? 'none' : ''; });
    holder.setAttribute('data-brushes', JSON.stringify(keys.map(function (k) { return { axis: Number(k), range: brushes[k] }; })));
    if (status) status.textContent = keys.length === 0 ? 'All ' + rows.length + ' front designs shown. Drag along an axis to select a range; click an axis to clear it.' : shown + ' of ' + rows.length + ' front designs selected by ' + keys.map(function (k) { return axes[k].label + ' ' + fmt(brushes[k][0]) + '…' + fmt(brushes[k][1]); }).join(', ') + '. Click an axis to clear its range.';
  }
  apply();
})();
`;
