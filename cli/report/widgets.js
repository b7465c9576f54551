// pleat report: the drawing helpers and widgets the views share (report.js):
// SVG and HTML builders, number text, ticks, the pannable plot frame, the
// region browser and the pattern search. Knows nothing of the page's data.
// No network access, no libraries. Embedded before report.js.
const pleatWidgets = (function () {
  'use strict';
  const SVG = 'http://www.w3.org/2000/svg';

  // ---- small helpers ----------------------------------------------------
  function svg(tag, attributes, parent) {
    const node = document.createElementNS(SVG, tag);
    for (const key in attributes) node.setAttribute(key, attributes[key]);
    if (parent) parent.appendChild(node);
    return node;
  }
  function html(tag, attributes, text, parent) {
    const node = document.createElement(tag);
    for (const key in attributes) node.setAttribute(key, attributes[key]);
    if (text !== undefined && text !== null) node.textContent = text;
    if (parent) parent.appendChild(node);
    return node;
  }
  function decimal(value) {
    if (value === null || value === undefined) return '';
    if (value === 0) return '0';
    const text = Number(value).toPrecision(6);
    return String(Number(text));
  }
  function subscript(name) {  // "x12" -> x with subscript digits 1 2
    return name.replace(/[0-9]/g, function (d) { return String.fromCharCode(0x2080 + Number(d)); });
  }
  // "a x1 + b x2 + c" from exact strings (zero terms left out).
  function affineText(coefficients, offset, names) {
    let text = '';
    coefficients.forEach(function (a, i) {
      if (a === '0' || a === 0) return;
      const negative = String(a).charAt(0) === '-';
      const magnitude = negative ? String(a).slice(1) : String(a);
      const term = (magnitude === '1' ? '' : magnitude + ' ') + names[i];
      text += text === '' ? (negative ? '-' + term : term) : (negative ? ' - ' : ' + ') + term;
    });
    const c = String(offset);
    if (c !== '0' || text === '') {
      const negative = c.charAt(0) === '-';
      text += text === '' ? c : (negative ? ' - ' + c.slice(1) : ' + ' + c);
    }
    return text;
  }
  function decimalList(values) { return '(' + values.map(decimal).join(', ') + ')'; }
  function exactList(values) { return '(' + values.join(', ') + ')'; }

  // Round tick values: 1, 2 or 5 times a power of ten, 4 to 8 of them
  // (docs/figure-style.md), with plain labels (never exponent notation).
  function niceTicks(lo, hi) {
    const span = hi - lo;
    if (!(span > 0)) return [lo];
    let best = null;
    const base = Math.pow(10, Math.floor(Math.log10(span)) - 1);
    for (const power of [base, base * 10, base * 100]) {
      for (const m of [1, 2, 5]) {
        const step = m * power;
        const first = Math.ceil(lo / step - 1e-9), last = Math.floor(hi / step + 1e-9);
        const count = last - first + 1;
        if (count >= 4 && count <= 8 && (best === null || count > best.count)) best = { step: step, first: first, count: count };
      }
    }
    if (best === null) {
      const step = span / 4;
      return [0, 1, 2, 3, 4].map(function (k) { return lo + k * step; });
    }
    const ticks = [];
    for (let k = 0; k < best.count; ++k) ticks.push((best.first + k) * best.step);
    return ticks;
  }
  function tickText(value, step) {
    const digits = Math.max(0, Math.min(12, -Math.floor(Math.log10(step) + 1e-9)));
    let text = value.toFixed(digits);
    if (text.indexOf('.') >= 0) text = text.replace(/0+$/, '').replace(/\.$/, '');
    return text === '-0' ? '0' : text;
  }

  // ---- the summary's and side panel's pieces ---------------------------------
  function detailList(parent, rows) {
    const list = html('dl', {}, null, parent);
    rows.forEach(function (row) {
      html('dt', {}, row[0], list);
      const dd = html('dd', row[2] ? { id: row[2] } : {}, null, list);
      if (row[1] instanceof Node) dd.appendChild(row[1]); else dd.textContent = row[1];
    });
    return list;
  }
  function exactWithDecimal(exact, approx, cls) {
    const span = document.createElement('span');
    html('span', { class: cls || 'exact' }, exact, span);
    if (approx !== null && approx !== undefined && String(exact) !== decimal(approx))
      html('span', { class: 'decimal' }, ' \u2248 ' + (Array.isArray(approx) ? decimalList(approx) : decimal(approx)), span);
    return span;
  }

  // ---- a pannable, zoomable plot frame in data coordinates ------------------
  // The plot area is W x H px of the SVG's own units; world holds the data,
  // drawn through one matrix (zoom k, pan tx, ty) so that 20 000 polygons
  // need no rewriting when the view moves. Strokes do not scale.
  // height: the plot's height in px, or 0 for equal units on both axes.
  function PlotFrame(parent, view, axisNames, label, height) {
    const left = 64, top = 26, right = 14, bottom = 46;
    const W = 600;
    const ratio = (view.y1 - view.y0) / (view.x1 - view.x0);
    const H = height || Math.max(260, Math.min(600, Math.round(W * (isFinite(ratio) ? ratio : 1))));
    const root = svg('svg', { class: 'plot', viewBox: '0 0 ' + (left + W + right) + ' ' + (top + H + bottom),
      role: 'group', tabindex: '0', 'aria-label': label, id: 'plot' }, parent);
    const defs = svg('defs', {}, root);
    const clip = svg('clipPath', { id: 'plot-clip' }, defs);
    svg('rect', { x: left, y: top, width: W, height: H }, clip);
    const clipped = svg('g', { 'clip-path': 'url(#plot-clip)' }, root);
    svg('rect', { x: left, y: top, width: W, height: H, fill: '#ffffff' }, clipped);
    const world = svg('g', { id: 'world' }, clipped);
    const axes = svg('g', { id: 'axes' }, root);
    const frame = { root: root, world: world, left: left, top: top, W: W, H: H, k: 1, tx: 0, ty: 0, onchange: null };
    const bx = W / (view.x1 - view.x0), by = H / (view.y1 - view.y0);
    frame.apply = function () {
      const a = bx * frame.k, d = by * frame.k;
      const e = left + frame.tx - view.x0 * a, f = top + frame.ty + view.y1 * d;
      world.setAttribute('transform', 'matrix(' + a + ' 0 0 ' + (-d) + ' ' + e + ' ' + f + ')');
      drawAxes();
      if (frame.onchange) frame.onchange();
    };
    // The data rectangle now visible.
    frame.visible = function () {
      const a = bx * frame.k, d = by * frame.k;
      const e = left + frame.tx - view.x0 * a, f = top + frame.ty + view.y1 * d;
      return { x0: (left - e) / a, x1: (left + W - e) / a, y0: (f - top - H) / d, y1: (f - top) / d };
    };
    function drawAxes() {
      while (axes.firstChild) axes.removeChild(axes.firstChild);
      const v = frame.visible();
      const a = bx * frame.k, d = by * frame.k;
      const e = left + frame.tx - view.x0 * a, f = top + frame.ty + view.y1 * d;
      const xs = niceTicks(v.x0, v.x1), ys = niceTicks(v.y0, v.y1);
      const xStep = xs.length > 1 ? xs[1] - xs[0] : 1, yStep = ys.length > 1 ? ys[1] - ys[0] : 1;
      const gap = 7, yAxis = top + H + gap, xAxis = left - gap;
      if (xs.length) svg('line', { class: 'frame', x1: a * xs[0] + e, x2: a * xs[xs.length - 1] + e, y1: yAxis, y2: yAxis }, axes);
      xs.forEach(function (x) {
        const px = a * x + e;
        svg('line', { class: 'frame', x1: px, x2: px, y1: yAxis, y2: yAxis - 4 }, axes);
        svg('text', { x: px, y: yAxis + 14, 'text-anchor': 'middle' }, axes).textContent = tickText(x, xStep);
      });
      if (ys.length) svg('line', { class: 'frame', y1: f - d * ys[0], y2: f - d * ys[ys.length - 1], x1: xAxis, x2: xAxis }, axes);
      ys.forEach(function (y) {
        const py = f - d * y;
        svg('line', { class: 'frame', y1: py, y2: py, x1: xAxis, x2: xAxis + 4 }, axes);
        svg('text', { x: xAxis - 5, y: py + 4, 'text-anchor': 'end' }, axes).textContent = tickText(y, yStep);
      });
      svg('text', { x: left + W, y: yAxis + 32, 'text-anchor': 'end', fill: '#1f1d2b' }, axes).textContent = subscript(axisNames[0]) + ' \u2192';
      svg('text', { x: xAxis - 5, y: top - 10, 'text-anchor': 'start', fill: '#1f1d2b' }, axes).textContent = subscript(axisNames[1]) + ' \u2191';
    }
    frame.zoomAt = function (factor, px, py) {
      const k = Math.max(0.2, Math.min(2e5, frame.k * factor));
      const real = k / frame.k;
      frame.tx = px - left - (px - left - frame.tx) * real;
      frame.ty = py - top - (py - top - frame.ty) * real;
      frame.k = k;
      frame.apply();
    };
    frame.reset = function () { frame.k = 1; frame.tx = 0; frame.ty = 0; frame.apply(); };
    frame.pan = function (dx, dy) { frame.tx += dx; frame.ty += dy; frame.apply(); };
    // Client (CSS pixel) position of a data point, for tests and keyboard users.
    frame.toClient = function (x, y) {
      const point = root.createSVGPoint();
      point.x = x; point.y = y;
      const p = point.matrixTransform(world.getScreenCTM());
      return { x: p.x, y: p.y };
    };
    function svgPoint(event) {
      const point = root.createSVGPoint();
      point.x = event.clientX; point.y = event.clientY;
      return point.matrixTransform(root.getScreenCTM().inverse());
    }
    root.addEventListener('wheel', function (event) {
      event.preventDefault();
      const p = svgPoint(event);
      frame.zoomAt(event.deltaY < 0 ? 1.25 : 0.8, p.x, p.y);
    }, { passive: false });
    let drag = null;
    root.addEventListener('pointerdown', function (event) {
      if (event.button !== 0) return;
      const p = svgPoint(event);
      drag = { x: p.x, y: p.y, moved: false, id: event.pointerId };
    });
    root.addEventListener('pointermove', function (event) {
      if (!drag) return;
      const p = svgPoint(event);
      const dx = p.x - drag.x, dy = p.y - drag.y;
      if (!drag.moved && Math.abs(dx) + Math.abs(dy) < 4) return;
      if (!drag.moved) { drag.moved = true; root.setPointerCapture(drag.id); }
      drag.x = p.x; drag.y = p.y;
      frame.pan(dx, dy);
    });
    function endDrag(event) {
      if (drag && drag.moved) { frame.justDragged = true; setTimeout(function () { frame.justDragged = false; }, 0); }
      if (drag && drag.moved && root.hasPointerCapture(drag.id)) root.releasePointerCapture(drag.id);
      drag = null;
      return event;
    }
    root.addEventListener('pointerup', endDrag);
    root.addEventListener('pointercancel', endDrag);
    frame.isDragging = function () { return drag !== null && drag.moved; };
    return frame;
  }

  function zoomButtons(parent, frame) {
    const group = html('div', { class: 'zoom', role: 'group', 'aria-label': 'zoom' }, null, parent);
    const centre = function () { return [frame.left + frame.W / 2, frame.top + frame.H / 2]; };
    html('button', { type: 'button', 'aria-label': 'zoom in', id: 'zoom-in' }, '+', group)
      .addEventListener('click', function () { const c = centre(); frame.zoomAt(1.5, c[0], c[1]); });
    html('button', { type: 'button', 'aria-label': 'zoom out', id: 'zoom-out' }, '\u2212', group)
      .addEventListener('click', function () { const c = centre(); frame.zoomAt(1 / 1.5, c[0], c[1]); });
    html('button', { type: 'button', id: 'zoom-reset' }, 'reset view', group)
      .addEventListener('click', frame.reset);
  }

  // Arrow keys pan, + and - zoom, 0 resets, n and p step through the regions.
  function keyboard(frame, step) {
    frame.root.addEventListener('keydown', function (event) {
      const c = [frame.left + frame.W / 2, frame.top + frame.H / 2];
      const keys = {
        ArrowLeft: function () { frame.pan(40, 0); }, ArrowRight: function () { frame.pan(-40, 0); },
        ArrowUp: function () { frame.pan(0, 40); }, ArrowDown: function () { frame.pan(0, -40); },
        '+': function () { frame.zoomAt(1.5, c[0], c[1]); }, '=': function () { frame.zoomAt(1.5, c[0], c[1]); },
        '-': function () { frame.zoomAt(1 / 1.5, c[0], c[1]); }, '0': frame.reset,
        n: function () { step(1); }, p: function () { step(-1); }
      };
      if (keys[event.key]) { event.preventDefault(); keys[event.key](); }
    });
  }

  // ---- regions: the shared side panel and search ------------------------------
  function RegionBrowser(side, regions, map, describe, outlineOf) {
    const browser = { selected: -1, hovered: -1, matches: [], matchIndex: 0 };
    const details = html('section', { class: 'details', id: 'details', 'aria-live': 'polite' }, null, side);
    html('h2', {}, 'Region', details);
    const body = html('div', { id: 'details-body' }, null, details);
    html('p', { class: 'hint' }, map.has_details
      ? 'Point at a region (or focus the map and press n / p) to see its pattern, exact interior point, area, affine map and rank rows. Click to keep it.'
      : 'This view has more regions than the page holds details for (pleat report --detail-limit): their shapes only; the summary\'s counts are exact.', body);
    browser.show = function (index) {
      while (body.firstChild) body.removeChild(body.firstChild);
      if (index < 0) return;
      describe(regions[index], body);
      outlineOf(index);
    };
    // Leaving the map keeps the last region shown (or the clicked one), so
    // the panel and the controls under it do not jump.
    browser.hover = function (index) {
      if (index === browser.hovered) return;
      browser.hovered = index;
      if (index >= 0) browser.show(index);
      else if (browser.selected >= 0) browser.show(browser.selected);
    };
    browser.select = function (index) {
      browser.selected = index;
      browser.hovered = -1;
      browser.show(index);
    };
    browser.step = function (delta) {
      if (!map.has_details || regions.length === 0) return;
      const from = browser.selected < 0 ? (delta > 0 ? -1 : 0) : browser.selected;
      browser.select((from + delta + regions.length) % regions.length);
    };
    return browser;
  }

  function normalisedPattern(text) { return text.trim().replace(/\//g, '|'); }
  function patternMatcher(text) {
    const wanted = normalisedPattern(text);
    if (!/[?*]/.test(wanted)) return function (pattern) { return pattern === wanted; };
    const expression = new RegExp('^' + wanted.replace(/[.+^${}()[\]\\|]/g, '\\$&').replace(/\?/g, '.').replace(/\*/g, '.*') + '$');
    return function (pattern) { return expression.test(pattern); };
  }

  function searchForm(parent, regions, map, browser, markMatches) {
    const form = html('form', { role: 'search', id: 'search-form' }, null, parent);
    html('label', { for: 'pattern-search' }, 'pattern', form);
    const input = html('input', { type: 'search', id: 'pattern-search', placeholder: '0110|10?1  (? one neuron, * any)',
      autocomplete: 'off', spellcheck: 'false' }, null, form);
    html('button', { type: 'submit' }, 'find', form);
    const next = html('button', { type: 'button', id: 'search-next', disabled: '' }, 'next', form);
    const status = html('span', { class: 'note', id: 'search-status', role: 'status' }, '', form);
    if (!map.has_details) { input.disabled = true; status.textContent = 'no search: shapes only (--detail-limit)'; }
    form.addEventListener('submit', function (event) {
      event.preventDefault();
      const matches = [];
      if (input.value.trim() !== '') {
        const matcher = patternMatcher(input.value);
        regions.forEach(function (region, index) { if (matcher(region.pattern)) matches.push(index); });
      }
      browser.matches = matches;
      browser.matchIndex = 0;
      markMatches(matches);
      next.disabled = matches.length < 2;
      if (matches.length === 0) {
        status.textContent = input.value.trim() === '' ? '' : 'no region has this pattern in the view';
        return;
      }
      status.textContent = matches.length === 1 ? '1 region' : matches.length + ' regions; showing the first';
      browser.select(matches[0]);
    });
    next.addEventListener('click', function () {
      if (browser.matches.length === 0) return;
      browser.matchIndex = (browser.matchIndex + 1) % browser.matches.length;
      browser.select(browser.matches[browser.matchIndex]);
      status.textContent = (browser.matchIndex + 1) + ' of ' + browser.matches.length;
    });
  }

  return {
    svg, html, decimal, subscript, affineText, decimalList,
    exactList, niceTicks, tickText, detailList, exactWithDecimal, PlotFrame,
    zoomButtons, keyboard, RegionBrowser, normalisedPattern, patternMatcher, searchForm
  };
})();
