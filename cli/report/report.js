// pleat report: the page's own script. It reads the JSON that pleat embedded
// (script#pleat-data, format pleat-report/1) and draws it; it computes
// nothing that is shown as exact (exact values are the strings in the data).
// No network access, no libraries; the shared helpers are widgets.js,
// embedded before this file.
(function () {
  'use strict';
  const data = JSON.parse(document.getElementById('pleat-data').textContent);
  const explore = document.getElementById('explore');
  const api = { data: data };
  window.pleatReport = api;

  const {
    svg, html, decimal, subscript, affineText, decimalList,
    exactList, niceTicks, tickText, detailList, exactWithDecimal, PlotFrame,
    zoomButtons, keyboard, RegionBrowser, normalisedPattern, patternMatcher, searchForm
  } = pleatWidgets;

  function rankText(region, outputs, inputs) {
    return 'adds ' + region.rows_first + ' independent rows when taken first (of at most ' + outputs * (inputs + 1) +
      ')' + (region.rows_new === null ? '' : '; ' + region.rows_new + ' new in walk order') +
      (region.nonsmooth_neurons.length ? '; no smooth points' : '');
  }
  function architecture() { return data.network.architecture; }

  // ---- two inputs (and a 3-input slice): the region map ---------------------
  // map: a plane map (data.map, or one of data.slices' maps); parent: where
  // to draw it (emptied first, so a slice can replace another).
  function planeView(map, slice, parent) {
    while (parent.firstChild) parent.removeChild(parent.firstChild);
    const regions = map.regions;
    const names = data.axes;
    const view = { x0: map.view.lower_double[0], x1: map.view.upper_double[0], y0: map.view.lower_double[1], y1: map.view.upper_double[1] };
    const layout = html('div', { class: 'explore' }, null, parent);
    const figure = html('div', { class: 'figure' }, null, layout);
    const side = html('div', { class: 'side' }, null, layout);
    html('h2', {}, slice ? 'The slice x' + (slice.axis + 1) + ' = ' + slice.value + ' (' + slice.regions + ' regions)' : 'Region map', figure);
    const controls = html('div', { class: 'controls' }, null, figure);
    const frame = PlotFrame(figure, view, names,
      'region map: arrow keys pan, + and - zoom, 0 resets, n and p step through the regions');
    zoomButtons(controls, frame);
    html('p', { class: 'hint' }, 'Drag to pan, scroll to zoom. ' + regions.length + ' regions drawn' +
      (map.has_details ? '' : ' (shapes only)') + '.', figure);

    const regionLayer = svg('g', { id: 'regions' }, frame.world);
    regions.forEach(function (region, index) {
      const colour = map.colours[region.colour];
      svg('polygon', { class: 'region', id: 'region-' + region.id, 'data-index': index,
        'data-pattern': region.pattern || '', fill: colour, stroke: colour,
        points: region.polygon.map(function (p) { return p[0] + ',' + p[1]; }).join(' ') }, regionLayer);
    });
    const lineLayers = [];
    const lineGroup = svg('g', { id: 'bent-hyperplanes', 'pointer-events': 'none' }, frame.world);
    data.network.layers.forEach(function (layer, k) {
      const group = svg('g', { id: 'layer-' + (k + 1), class: 'layer-lines', 'data-layer': k + 1 }, lineGroup);
      lineLayers.push(group);
    });
    map.lines.forEach(function (line) {
      const style = data.network.layers[line.layer];
      const path = svg('path', { class: 'bent', d: 'M' + line.from[0] + ' ' + line.from[1] + 'L' + line.to[0] + ' ' + line.to[1],
        'data-neurons': ' ' + line.neurons.join(' ') + ' ', 'stroke-width': style.line_width + 'px' }, lineLayers[line.layer]);
      if (style.dashes) path.setAttribute('stroke-dasharray', style.dashes);
    });
    const marks = svg('g', { id: 'marks' }, frame.world);
    const outline = svg('polygon', { class: 'outline', id: 'selected-outline', points: '' }, marks);
    const matchLayer = svg('g', { id: 'search-matches' }, marks);

    function describe(region, body) {
      html('h3', {}, 'region ' + region.id + ' of the walk', body);
      if (!map.has_details) { html('p', { class: 'note' }, 'shapes only (--detail-limit)', body); return; }
      const inputs = architecture()[0];
      const outputs = architecture()[architecture().length - 1];
      const coefficientNames = names;
      const rows = [['pattern', exactWithDecimal(region.pattern, null, 'pattern'), 'detail-pattern'],
        ['interior point', exactWithDecimal(exactList(region.point), region.point_double), 'detail-point'],
        [data.kind === 'slice' ? 'area in the slice' : 'area in the view', exactWithDecimal(region.area, region.area_double), 'detail-area']];
      region.map.A.forEach(function (row, o) {
        const name = region.map.A.length > 1 ? 'F' + subscript(String(o + 1)) : 'F';
        const exact = name + '(x) = ' + affineText(row, region.map.c[o], coefficientNames.map(subscript));
        const approx = affineText(region.map.A_double[o].map(decimal), decimal(region.map.c_double[o]), coefficientNames.map(subscript));
        const span = document.createElement('span');
        html('span', { class: 'exact' }, exact, span);
        if (approx !== affineText(row, region.map.c[o], coefficientNames.map(subscript)))
          html('span', { class: 'decimal' }, ' \u2248 ' + approx, span);
        rows.push([o === 0 ? (data.kind === 'slice' ? 'map on the slice' : 'affine map') : '', span, o === 0 ? 'detail-map' : undefined]);
      });
      rows.push(['rank rows', rankText(region, outputs, inputs), 'detail-rank']);
      rows.push(['bounded', region.bounded ? 'yes (in ' + (data.kind === 'slice' ? 'the plane' : 'R\u00b2') + ')' : 'no (in ' + (data.kind === 'slice' ? 'the plane' : 'R\u00b2') + ')']);
      if (region.nonsmooth_neurons.length) rows.push(['non-smooth', 'neurons ' + region.nonsmooth_neurons.join(', ') + ' identically zero']);
      detailList(body, rows);
    }
    function outlineOf(index) {
      outline.setAttribute('points', index < 0 ? '' : regionLayer.children[index].getAttribute('points'));
    }
    const browser = RegionBrowser(side, regions, map, describe, outlineOf);
    searchForm(controls, regions, map, browser, function (matches) {
      while (matchLayer.firstChild) matchLayer.removeChild(matchLayer.firstChild);
      matches.forEach(function (index) {
        svg('polygon', { class: 'match', points: regionLayer.children[index].getAttribute('points') }, matchLayer);
      });
    });
    function indexOf(target) {
      return target && target.classList && target.classList.contains('region') ? Number(target.getAttribute('data-index')) : -1;
    }
    if (map.has_details) {
      regionLayer.addEventListener('pointerover', function (event) { if (!frame.isDragging()) browser.hover(indexOf(event.target)); });
      frame.root.addEventListener('pointerleave', function () { browser.hover(-1); });
      regionLayer.addEventListener('click', function (event) { if (!frame.justDragged) browser.select(indexOf(event.target)); });
    }
    keyboard(frame, browser.step);

    // Layer toggles and the neuron list.
    const toggles = html('fieldset', { id: 'layer-toggles' }, null, side);
    html('legend', {}, 'Bent hyperplanes by layer', toggles);
    data.network.layers.forEach(function (layer, k) {
      const row = html('label', { class: 'layer-toggle' }, null, toggles);
      const box = html('input', { type: 'checkbox', id: 'toggle-layer-' + (k + 1), checked: '' }, null, row);
      const sample = svg('svg', { width: 34, height: 10, 'aria-hidden': 'true' }, row);
      const line = svg('line', { x1: 2, x2: 32, y1: 5, y2: 5, stroke: '#1f1d2b', 'stroke-width': layer.line_width, 'stroke-linecap': 'round' }, sample);
      if (layer.dashes) line.setAttribute('stroke-dasharray', layer.dashes);
      html('span', {}, 'layer ' + (k + 1) + ' (' + lineLayers[k].children.length + ' pieces)', row);
      box.addEventListener('change', function () { lineLayers[k].style.display = box.checked ? '' : 'none'; });
    });
    const neurons = html('fieldset', { id: 'neuron-list' }, null, side);
    html('legend', {}, 'Neurons: highlight a bent hyperplane', neurons);
    const pieces = {};
    map.lines.forEach(function (line, index) { line.neurons.forEach(function (n) { (pieces[n] = pieces[n] || []).push(index); }); });
    const paths = [];
    lineLayers.forEach(function (group) { for (const path of group.children) paths.push(path); });
    data.network.layers.forEach(function (layer, k) {
      const row = html('div', { class: 'neuron-row', role: 'group', 'aria-label': 'layer ' + (k + 1) + ' neurons' }, null, neurons);
      html('span', { class: 'layer-name' }, 'layer ' + (k + 1), row);
      for (let i = 0; i < layer.neurons; ++i) {
        const id = layer.first_neuron + i;
        const count = pieces[id] ? pieces[id].length : 0;
        const button = html('button', { type: 'button', 'aria-pressed': 'false', 'data-neuron': id,
          title: 'neuron ' + id + ' (layer ' + (k + 1) + ' #' + i + '): ' + (count ? count + ' pieces in the view' : 'no piece in the view') }, String(id), row);
        if (!count) button.disabled = true;
        button.addEventListener('click', function () {
          const on = button.getAttribute('aria-pressed') !== 'true';
          button.setAttribute('aria-pressed', on ? 'true' : 'false');
          paths.forEach(function (path) {
            if (path.getAttribute('data-neurons').indexOf(' ' + id + ' ') >= 0) path.classList.toggle('hl', on || anyOtherPressed(path));
          });
        });
      }
    });
    function anyOtherPressed(path) {
      for (const b of neurons.querySelectorAll('button[aria-pressed="true"]'))
        if (path.getAttribute('data-neurons').indexOf(' ' + b.getAttribute('data-neuron') + ' ') >= 0) return true;
      return false;
    }
    frame.apply();
    api.frame = frame;
    api.toClient = frame.toClient;
    api.browser = browser;
  }

  // ---- one input: the graph --------------------------------------------------
  function lineView() {
    const map = data.map;
    const regions = map.regions;
    let low = Infinity, high = -Infinity;
    regions.forEach(function (r) { low = Math.min(low, r.from[1], r.to[1]); high = Math.max(high, r.from[1], r.to[1]); });
    if (!(low < high)) { low -= 1; high += 1; }
    const pad = 0.08 * (high - low);
    const view = { x0: map.view.lower_double[0], x1: map.view.upper_double[0], y0: low - pad, y1: high + pad };
    const outputs = architecture()[architecture().length - 1];
    const layout = html('div', { class: 'explore' }, null, explore);
    const figure = html('div', { class: 'figure' }, null, layout);
    const side = html('div', { class: 'side' }, null, layout);
    html('h2', {}, 'The graph' + (outputs > 1 ? ' of the first output' : ''), figure);
    const controls = html('div', { class: 'controls' }, null, figure);
    // Equal units on both axes mean nothing for a graph: a 3:2 frame.
    const frame = PlotFrame(figure, view, ['x', outputs > 1 ? 'F1' : 'F'],
      'graph: arrow keys pan, + and - zoom, 0 resets, n and p step through the pieces', 400);
    const inner = frame.world;
    zoomButtons(controls, frame);
    html('p', { class: 'hint' }, 'Drag to pan, scroll to zoom. ' + regions.length + ' pieces, ' + map.breakpoints + ' breakpoints.', figure);
    const bands = svg('g', { id: 'regions' }, inner);
    regions.forEach(function (r, index) {
      svg('rect', { class: 'band', id: 'region-' + r.id, 'data-index': index, 'data-pattern': r.pattern || '',
        x: r.from[0], width: r.to[0] - r.from[0], y: view.y0 - 10 * (view.y1 - view.y0), height: 21 * (view.y1 - view.y0),
        fill: map.colours[r.colour], 'fill-opacity': 0.45, stroke: 'none' }, bands);
    });
    const points = [];
    regions.forEach(function (r, i) { points.push(r.from); if (i === regions.length - 1) points.push(r.to); });
    svg('polyline', { class: 'graph', points: points.map(function (p) { return p[0] + ',' + p[1]; }).join(' ') }, inner);
    const dots = svg('g', { id: 'breakpoints' }, inner);
    regions.forEach(function (r, i) {
      if (i === 0) return;
      const d = 'M' + r.from[0] + ' ' + r.from[1] + 'l0 0';
      svg('path', { class: 'breakpoint-ring', d: d }, dots);
      svg('path', { class: 'breakpoint-dot', d: d }, dots);
    });
    const marks = svg('g', { id: 'marks' }, inner);
    const outline = svg('rect', { class: 'outline', id: 'selected-outline', x: 0, y: 0, width: 0, height: 0 }, marks);
    const matchLayer = svg('g', { id: 'search-matches' }, marks);
    function describe(r, body) {
      html('h3', {}, 'piece ' + r.id + ' of the walk', body);
      if (!map.has_details) { html('p', { class: 'note' }, 'shapes only (--detail-limit)', body); return; }
      const slope = r.map.A[0][0], intercept = r.map.c[0];
      detailList(body, [
        ['pattern', exactWithDecimal(r.pattern, null, 'pattern'), 'detail-pattern'],
        ['interval', exactWithDecimal('[' + r.x_low + ', ' + r.x_high + ']', [r.from[0], r.to[0]]), 'detail-interval'],
        ['slope', exactWithDecimal(slope, r.map.A_double[0][0]), 'detail-slope'],
        ['intercept', exactWithDecimal(intercept, r.map.c_double[0]), 'detail-intercept'],
        ['values at the ends', exactWithDecimal(exactList([r.value_low, r.value_high]), [r.from[1], r.to[1]])],
        ['interior point', exactWithDecimal(r.point[0], r.point_double[0]), 'detail-point'],
        ['rank rows', rankText(r, outputs, 1), 'detail-rank'],
        ['bounded', r.bounded ? 'yes (in R)' : 'no (in R)']
      ]);
    }
    function outlineOf(index) {
      const band = bands.children[index];
      if (index < 0) { outline.setAttribute('width', 0); return; }
      for (const key of ['x', 'y', 'width', 'height']) outline.setAttribute(key, band.getAttribute(key));
    }
    const browser = RegionBrowser(side, regions, map, describe, outlineOf);
    searchForm(controls, regions, map, browser, function (matches) {
      while (matchLayer.firstChild) matchLayer.removeChild(matchLayer.firstChild);
      matches.forEach(function (index) {
        const band = bands.children[index];
        const mark = svg('rect', { class: 'match' }, matchLayer);
        for (const key of ['x', 'y', 'width', 'height']) mark.setAttribute(key, band.getAttribute(key));
      });
    });
    function indexOf(target) { return target && target.classList && target.classList.contains('band') ? Number(target.getAttribute('data-index')) : -1; }
    if (map.has_details) {
      bands.addEventListener('pointerover', function (event) { if (!frame.isDragging()) browser.hover(indexOf(event.target)); });
      frame.root.addEventListener('pointerleave', function () { browser.hover(-1); });
      bands.addEventListener('click', function (event) { if (!frame.justDragged) browser.select(indexOf(event.target)); });
    }
    keyboard(frame, browser.step);
    frame.apply();
    api.frame = frame;
    api.toClient = frame.toClient;
    api.browser = browser;
  }

  // ---- a survey: the histogram --------------------------------------------------
  function surveyView() {
    const survey = data.survey;
    const summary = survey.summary;
    const values = Object.keys(summary.histogram).map(Number);
    const layout = html('div', { class: 'explore' }, null, explore);
    const figure = html('div', { class: 'figure' }, null, layout);
    const side = html('div', { class: 'side' }, null, layout);
    html('h2', {}, 'Certified functional dimension', figure);
    if (values.length === 0) { html('p', { class: 'note' }, 'No certified sample yet.', figure); return; }
    let lo = Math.min.apply(null, values), hi = Math.max.apply(null, values);
    if (summary.scaling_bound !== null) { lo = Math.min(lo, summary.scaling_bound); hi = Math.max(hi, summary.scaling_bound); }
    let most = 0;
    values.forEach(function (v) { most = Math.max(most, summary.histogram[v]); });
    const bins = hi - lo + 1;
    const left = 24, top = 44, W = 600, H = 260, bottom = 70;
    const root = svg('svg', { class: 'plot', id: 'histogram', viewBox: '0 0 ' + (left + W + 24) + ' ' + (top + H + bottom), style: 'max-width: ' + (left + W + 24) * 1.25 + 'px',
      role: 'group', 'aria-label': 'histogram of the certified values; Tab to a bar for its samples' }, figure);
    const binWidth = W / bins;
    const barLayer = svg('g', { id: 'bars' }, root);
    const details = html('section', { class: 'details', id: 'details', 'aria-live': 'polite' }, null, side);
    html('h2', {}, 'Samples', details);
    const body = html('div', { id: 'details-body' }, null, details);
    html('p', { class: 'hint' }, 'Point at a bar (or Tab to it) to list its samples.', body);
    function show(value) {
      while (body.firstChild) body.removeChild(body.firstChild);
      const samples = survey.samples_by_value[String(value)] || [];
      html('h3', {}, 'functional dimension ' + value, body);
      detailList(body, [['certified samples', String(samples.length), 'detail-count'],
        ['sample indices', samples.length ? samples.join(', ') : 'none', 'detail-samples']]);
      html('p', { class: 'note' }, 'Sample i is pleat random --arch ' + summary.arch.join(',') + ' --seed ' + summary.seed + ' --sample i.', body);
    }
    const showLabels = bins <= 40;
    for (let v = lo; v <= hi; ++v) {
      const count = summary.histogram[v] || 0;
      const height = most ? H * count / most : 0;
      const x = left + (v - lo) * binWidth;
      const bar = svg('rect', { class: 'bar', x: x + 0.5, width: Math.max(binWidth - 1, 0.5), y: top + H - height, height: height,
        fill: survey.bar_colour, 'data-value': v, 'data-count': count, tabindex: count ? '0' : '-1',
        'aria-label': 'value ' + v + ': ' + count + ' samples' }, barLayer);
      bar.addEventListener('pointerover', function () { show(v); });
      bar.addEventListener('focus', function () { show(v); });
      if (count && (showLabels || count * 4 >= most))
        svg('text', { class: 'bar-count', x: x + binWidth / 2, y: top + H - height - 4 }, root).textContent = String(count);
    }
    if (summary.scaling_bound !== null) {
      // A thin ink rule at the bound's right edge, its value in italics (as pleat survey plot).
      const x = left + (summary.scaling_bound - lo + 1) * binWidth;
      svg('line', { class: 'bound-rule', x1: x, x2: x, y1: top - 30, y2: top + H }, root);
      svg('text', { class: 'bound-label', x: x - 5, y: top - 20, 'text-anchor': 'end' }, root).textContent = 'scaling bound ' + summary.scaling_bound;
    }
    const axisY = top + H + 7;
    // Every value when few (as pleat survey plot), else round ones.
    const ticks = bins <= 24 ? Array.from({ length: bins }, function (_, k) { return lo + k; })
      : niceTicks(lo, hi).filter(function (t) { return Number.isInteger(t); });
    const centreOf = function (v) { return left + (v - lo + 0.5) * binWidth; };
    if (ticks.length) svg('line', { class: 'frame', x1: centreOf(ticks[0]), x2: centreOf(ticks[ticks.length - 1]), y1: axisY, y2: axisY }, root);
    ticks.forEach(function (t) {
      svg('line', { class: 'frame', x1: centreOf(t), x2: centreOf(t), y1: axisY, y2: axisY - 4 }, root);
      svg('text', { x: centreOf(t), y: axisY + 14, 'text-anchor': 'middle' }, root).textContent = String(t);
    });
    svg('text', { x: left + W, y: axisY + 32, 'text-anchor': 'end', fill: '#1f1d2b' }, root).textContent = 'functional dimension \u2192';
    const domain = survey.domain_text;
    svg('text', { x: left, y: axisY + 54 }, root).textContent = summary.arch.join(',') + ', ' + summary.certified +
      ' samples certified, init ' + summary.init + ', seed ' + summary.seed + ', domain ' + domain;
    api.bars = barLayer;
  }

  // Several slices: a slider picks the one shown (each computed exactly by pleat).
  function sliceViewer() {
    const slices = data.slices;
    const chooser = html('div', { class: 'controls', id: 'slice-chooser' }, null, explore);
    const holder = html('div', { id: 'slice-view' }, null, explore);
    const axis = 'x' + (slices[0].axis + 1);
    if (slices.length > 1) {
      html('label', { for: 'slice-index' }, 'slice ' + axis + ' =', chooser);
      const slider = html('input', { type: 'range', id: 'slice-index', min: 0, max: slices.length - 1, step: 1, value: 0,
        'aria-valuetext': slices[0].value }, null, chooser);
      const shown = html('output', { for: 'slice-index', id: 'slice-value', class: 'exact' }, slices[0].value, chooser);
      html('span', { class: 'note' }, slices.length + ' slices, each an exact 2-D walk', chooser);
      slider.addEventListener('input', function () {
        const k = Number(slider.value);
        shown.textContent = slices[k].value;
        slider.setAttribute('aria-valuetext', slices[k].value);
        api.slice = k;
        planeView(slices[k].map, slices[k], holder);
      });
    }
    api.slice = 0;
    planeView(slices[0].map, slices[0], holder);
  }

  if (data.kind === 'plane') planeView(data.map, null, explore);
  else if (data.kind === 'slice') sliceViewer();
  else if (data.kind === 'line') lineView();
  else if (data.kind === 'survey') surveyView();
  document.documentElement.setAttribute('data-ready', 'true');
})();
