/* sinkopt report page: Pareto plots, design panel, sortable table, parallel coordinates.
   Every text that comes from the study or fan files goes into the DOM with textContent, and
   into plotly (which reads a few HTML-like tags) through esc().

   The data (report_data.py) holds each number once: every trial's values in D.pareto.points
   (columns), per Pareto design only what the points lack (D.designs), each fan array's curve at
   rated speed (D.fans; other speeds by the fan laws). This script builds the table, the figures
   and the drawings from them. plotly.js is embedded gzip-compressed and base64-encoded
   (#plotly-js): loadPlotly() unpacks and runs it. <body data-ready> marks the page ready (plotly
   loaded, the 2-D front and the table drawn); data-ready-ms is the time it took. */
(function () {
  'use strict';

  var D = JSON.parse(document.getElementById('sinkopt-data').textContent);
  var CONFIG = {displaylogo: false, responsive: true, showSendToCloud: false,
                showEditInChartStudio: false, modeBarButtonsToRemove: ['select2d', 'lasso2d']};
  var PALETTE = ['#2f5d7c', '#c0662b', '#4f8a4c', '#7b4f8c', '#b89b2e', '#3a9a9c', '#a23f3f',
                 '#d48fb4', '#7fa7d4', '#8c6d3f', '#9fbf6f', '#5c5fb0'];
  var SCALE = [[0, '#24425c'], [0.35, '#5f8aa6'], [0.7, '#c9c8a0'], [1, '#d9963f']];
  var FONT = {family: "system-ui, -apple-system, 'Segoe UI', Roboto, Helvetica, Arial, sans-serif",
              size: 12, color: '#1f2328'};
  var INK = '#1f2328', GRID = '#e3e5e8', ACCENT = '#2f5d7c', WARM = '#b5652b';
  var BREAKDOWN = [['air_heating_upstream', 'air heated by upstream devices', '#9fb3c2'],
                   ['sink_and_spreading', 'sink and base spreading', '#2f5d7c'],
                   ['mounting_stack', 'mounting stack (case to sink)', '#c7a15a'],
                   ['junction_to_case', 'junction to case', '#7b4f6e']];
  var P = D.pareto.points;
  var OBJ = D.pareto.objectives;
  var DS = D.designs;
  var FANS = D.fans || {};
  var INDEX = {};
  P.trial.forEach(function (t, i) { INDEX[t] = i; });
  var state = {x: null, y: null, z: null, colour: null, infeasible: true, logx: false,
               logy: false, selected: null, ready3d: false};
  var HAVE_PLOTLY = false;
  var plotlyState = 'loading', plotlyReady = null;  // 'ready' or 'failed' once settled

  /* ---------- helpers ---------- */
  function esc(s) {
    return String(s).replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;');
  }
  function el(tag, attrs, text) {
    var e = document.createElement(tag);
    if (attrs) {
      Object.keys(attrs).forEach(function (k) { e.setAttribute(k, attrs[k]); });
    }
    if (text !== undefined && text !== null) { e.textContent = String(text); }
    return e;
  }
  function svgEl(tag, attrs) {
    var e = document.createElementNS('http://www.w3.org/2000/svg', tag);
    Object.keys(attrs || {}).forEach(function (k) { e.setAttribute(k, attrs[k]); });
    return e;
  }
  function fmt(v, digits) {
    if (v === null || v === undefined || (typeof v === 'number' && !isFinite(v))) { return '–'; }
    if (typeof v !== 'number') { return String(v); }
    if (Number.isInteger(v) && Math.abs(v) < 1e6) { return String(v); }
    if (Math.abs(v) >= 1e4) { return v.toFixed(0); }
    var s = v.toPrecision(digits || 4);
    if (s.indexOf('e') >= 0) { return String(Number(s)); }
    if (s.indexOf('.') >= 0) { s = s.replace(/0+$/, '').replace(/\.$/, ''); }
    return s;
  }
  function unitText(u) { return u && u !== '-' ? ' [' + u + ']' : ''; }

  /* ---------- axis and colour choices ---------- */
  var AXES = [];
  OBJ.forEach(function (o) {
    AXES.push({id: 'objective:' + o.name, group: 'objectives', label: o.label + unitText(o.unit),
               title: o.label + unitText(o.unit) + (o.direction === 'maximize' ? ', higher is better' : ', lower is better'),
               values: P.objectives[o.name]});
  });
  D.pareto.colour_options.forEach(function (c) {
    if (c.kind !== 'numeric') { return; }
    var dup = OBJ.some(function (o) { return o.column === c.key; });
    if (dup) { return; }
    AXES.push({id: 'numeric:' + c.key, group: 'other quantities', label: c.label + unitText(c.unit),
               title: c.label + unitText(c.unit), values: P.numeric[c.key]});
  });
  function axis(id) {
    for (var i = 0; i < AXES.length; i++) { if (AXES[i].id === id) { return AXES[i]; } }
    return AXES[0];
  }
  function colourOption(key) {
    var list = D.pareto.colour_options;
    for (var i = 0; i < list.length; i++) { if (list[i].key === key) { return list[i]; } }
    return null;
  }
  function fillSelect(sel, items, value) {
    var groups = {};
    items.forEach(function (it) {
      var parent = sel;
      if (it.group) {
        if (!groups[it.group]) {
          groups[it.group] = el('optgroup', {label: it.group});
          sel.appendChild(groups[it.group]);
        }
        parent = groups[it.group];
      }
      var o = el('option', {value: it.id}, it.label);
      parent.appendChild(o);
    });
    sel.value = value;
  }

  /* ---------- Pareto plots ---------- */
  function hoverText(i) {
    var n = P.numeric, c = P.categorical;
    var st = P.status[i] === 'pareto' ? 'Pareto design' :
      (P.status[i] === 'feasible' ? 'feasible, dominated' : 'infeasible');
    var lines = ['<b>trial ' + P.trial[i] + '</b> · ' + st + (P.exact[i] ? ' (exact series)' : ' (search model)')];
    if (c.fan) { lines.push('fan ' + esc(c.fan[i]) + (n.fan_speed_pct && n.fan_speed_pct[i] !== null ? ' at ' + fmt(n.fan_speed_pct[i], 3) + ' % of rated speed' : '')); }
    if (n.width_mm) {
      lines.push('W ' + fmt(n.width_mm[i]) + ' × L ' + fmt(n.length_mm[i]) + ' mm, fins H ' +
                 fmt(n.fin_height_mm[i]) + ' mm');
      lines.push(fmt(n.n_fins[i]) + ' fins × ' + fmt(n.fin_thickness_mm[i], 3) + ' mm, gap ' +
                 fmt(n.fin_gap_mm ? n.fin_gap_mm[i] : null, 3) + ' mm, base ' + fmt(n.base_thickness_mm[i], 3) + ' mm');
    }
    lines.push('volume ' + fmt(n.volume_cm3[i]) + ' cm³, mass ' + fmt(n.mass_kg[i], 3) + ' kg');
    lines.push('fan power ' + fmt(n.fan_power_W[i], 3) + ' W, airflow ' +
               fmt(n.airflow_m3_s[i] === null ? null : n.airflow_m3_s[i] * 3600, 3) + ' m³/h');
    lines.push('worst junction margin ' + fmt(n.worst_margin_K[i], 3) + ' K, air rise ' + fmt(n.air_rise_K[i], 3) + ' K');
    Object.keys(c).forEach(function (k) {
      if (k.indexOf('mount_') === 0) { lines.push(esc(k.slice(6)) + ' mounting: ' + esc(c[k][i])); }
    });
    return lines.join('<br>');
  }
  var HOVER = P.trial.map(function (_, i) { return hoverText(i); });

  function indices(status, keys) {
    var out = [];
    for (var i = 0; i < P.trial.length; i++) {
      if (P.status[i] !== status) { continue; }
      var ok = keys.every(function (k) {
        var v = axis(k).values[i];
        return v !== null && v !== undefined && isFinite(v);
      });
      if (ok) { out.push(i); }
    }
    return out;
  }

  function categories(key) {
    var seen = {}, list = [];
    P.categorical[key].forEach(function (v) { if (!seen[v]) { seen[v] = true; list.push(v); } });
    return list.sort();
  }

  function makeTrace(idx, keys, is3d, style) {
    var t = {
      type: is3d ? 'scatter3d' : 'scatter', mode: 'markers',
      x: idx.map(function (i) { return axis(keys[0]).values[i]; }),
      y: idx.map(function (i) { return axis(keys[1]).values[i]; }),
      customdata: idx.map(function (i) { return P.trial[i]; }),
      text: idx.map(function (i) { return HOVER[i]; }),
      hoverinfo: 'text', meta: style.meta, name: style.name, legendgroup: style.group,
      showlegend: style.showlegend !== false, marker: style.marker
    };
    if (is3d) { t.z = idx.map(function (i) { return axis(keys[2]).values[i]; }); }
    return t;
  }

  function frontTraces(keys, is3d) {
    var traces = [];
    var opt = colourOption(state.colour);
    var small = is3d ? 0.6 : 1;
    if (state.infeasible) {
      var bad = indices('infeasible', keys);
      if (bad.length) {
        traces.push(makeTrace(bad, keys, is3d, {meta: 'infeasible', name: 'infeasible', group: 'infeasible',
          marker: {symbol: 'x', size: 6 * small + 1, color: '#a3a8ae', opacity: 0.45}}));
      }
    }
    ['feasible', 'pareto'].forEach(function (status) {
      var idx = indices(status, keys);
      if (!idx.length) { return; }
      var pareto = status === 'pareto';
      var base = {size: (pareto ? 11 : 7) * small + (is3d ? 1 : 0), opacity: pareto ? 1 : 0.3,
                  line: pareto ? {color: '#1f2328', width: 1.2} : {width: 0}};
      if (opt && opt.kind === 'categorical') {
        var cats = categories(opt.key);
        cats.forEach(function (cat, k) {
          var sub = idx.filter(function (i) { return P.categorical[opt.key][i] === cat; });
          if (!sub.length) { return; }
          var m = Object.assign({}, base, {color: PALETTE[k % PALETTE.length]});
          traces.push(makeTrace(sub, keys, is3d, {meta: status, group: cat,
            name: esc(cat) + (pareto ? '' : ' (dominated)'), showlegend: pareto, marker: m}));
        });
      } else if (opt) {
        var vals = P.numeric[opt.key];
        var fin = vals.filter(function (v) { return v !== null; });
        var m2 = Object.assign({}, base, {
          color: idx.map(function (i) { return vals[i]; }), colorscale: SCALE,
          cmin: Math.min.apply(null, fin), cmax: Math.max.apply(null, fin),
          showscale: pareto,
          colorbar: pareto ? {title: {text: esc(opt.label + unitText(opt.unit)), side: 'right'},
                              thickness: 12, len: 0.8} : undefined});
        traces.push(makeTrace(idx, keys, is3d, {meta: status, group: status,
          name: pareto ? 'Pareto designs' : 'feasible, dominated', marker: m2}));
      }
    });
    if (!is3d) {  // the uncertainty band as error bars on a junction-margin axis: down to P5
      traces.forEach(function (t) {
        if (t.meta !== 'pareto') { return; }
        [['x', 0], ['y', 1]].forEach(function (a) {
          if (keys[a[1]] !== 'objective:junction_margin' && keys[a[1]] !== 'numeric:worst_margin_K') { return; }
          var minus = t.customdata.map(function (trial, k) {
            var d = DS.by_trial[String(trial)], v = t[a[0]][k];
            if (!d || !d.band || d.band.p95_margin_K === null || v === null) { return 0; }
            return Math.max(0, v - d.band.p95_margin_K);
          });
          t['error_' + a[0]] = {type: 'data', symmetric: false, array: minus.map(function () { return 0; }),
                                arrayminus: minus, thickness: 1, width: 0, color: 'rgba(31,35,40,0.35)'};
        });
      });
    }
    if (state.selected !== null) {
      var j = INDEX[state.selected];
      if (j !== undefined && keys.every(function (k) { return axis(k).values[j] !== null; })) {
        traces.push(makeTrace([j], keys, is3d, {meta: 'selected', name: 'selected', group: 'selected',
          showlegend: false, marker: {symbol: 'circle-open', size: is3d ? 12 : 22,
          color: '#b5652b', line: {width: 3, color: '#b5652b'}}}));
        traces[traces.length - 1].hoverinfo = 'skip';
      }
    }
    return traces;
  }

  function axisLayout(id, log) {
    return Object.assign({title: {text: esc(axis(id).title)}, type: log ? 'log' : 'linear', gridcolor: '#e3e5e8',
            zerolinecolor: '#c9ccd0', linecolor: '#9aa0a6', showline: true, mirror: true},
            log ? {} : focusRange(id));
  }
  /* Break a title into lines of about n characters at spaces. */
  function wrapTitle(text, n) {
    var out = [], line = '';
    text.split(' ').forEach(function (w) {
      if (line && (line + ' ' + w).length > n) { out.push(line); line = w; } else { line = line ? line + ' ' + w : w; }
    });
    if (line) { out.push(line); }
    return out.join('<br>');
  }
  /* The axis range of the feasible designs (with a margin) when infeasible trials lie far
     outside it (a design that misses its margin by 2000 K flattened the front); those trials
     are then off the plot (zoom out, or the table and trials.csv, show them). */
  function focusRange(id) {
    var v = axis(id).values, lo = Infinity, hi = -Infinity, all_lo = Infinity, all_hi = -Infinity;
    v.forEach(function (x, i) {
      if (x === null || !isFinite(x)) { return; }
      all_lo = Math.min(all_lo, x); all_hi = Math.max(all_hi, x);
      if (P.status[i] !== 'infeasible') { lo = Math.min(lo, x); hi = Math.max(hi, x); }
    });
    if (!isFinite(lo) || !isFinite(hi)) { return {}; }
    var span = Math.max(hi - lo, Math.abs(hi) * 0.05, 1e-9);
    if (all_lo >= lo - span && all_hi <= hi + span) { return {}; }
    return {range: [lo - 0.25 * span, hi + 0.25 * span], autorange: false};
  }

  function draw2d() {
    if (!HAVE_PLOTLY || !P.trial.length) { return Promise.resolve(); }
    var keys = [state.x, state.y];
    var layout = {font: FONT, height: 500, hovermode: 'closest', plot_bgcolor: '#fff',
                  paper_bgcolor: 'rgba(0,0,0,0)', margin: {l: 70, r: 20, t: 30, b: 60},
                  xaxis: axisLayout(state.x, state.logx), yaxis: axisLayout(state.y, state.logy),
                  legend: {orientation: 'h', y: -0.18, x: 0, font: {size: 11}},
                  title: {text: '2-D view', font: {size: 13}, x: 0.01}, uirevision: keys.join('|')};
    return Plotly.react('pareto2d', frontTraces(keys, false), layout, CONFIG);
  }

  function draw3d() {
    if (!has3d || !HAVE_PLOTLY || !state.ready3d) { return Promise.resolve(); }
    var keys = [state.x, state.y, state.z];
    function ax(id) {
      // short lines, small type: long titles of neighbouring axes overlapped at 1366 px
      return Object.assign({title: {text: wrapTitle(esc(axis(id).title), 22), font: {size: 11}},
              gridcolor: '#dfe2e5', backgroundcolor: '#fbfbfa', showbackground: true},
              focusRange(id));
    }
    var layout = {font: FONT, height: 500, paper_bgcolor: 'rgba(0,0,0,0)',
                  margin: {l: 0, r: 0, t: 30, b: 20}, showlegend: false,
                  title: {text: '3-D view', font: {size: 13}, x: 0.01},
                  scene: {xaxis: ax(state.x), yaxis: ax(state.y), zaxis: ax(state.z),
                          aspectmode: 'cube'}, uirevision: 'scene'};
    return Plotly.react('pareto3d', frontTraces(keys, true), layout, CONFIG);
  }


  var has3d = AXES.length >= 3 && OBJ.length >= 3;
  var webglFlag = null;
  function webgl() {
    if (webglFlag === null) {
      try {
        var c = document.createElement('canvas');
        webglFlag = !!(window.WebGLRenderingContext && (c.getContext('webgl') || c.getContext('experimental-webgl')));
      } catch (e) { webglFlag = false; }
    }
    return webglFlag;
  }
  var NO_WEBGL = 'This view needs WebGL, which is turned off or missing in this browser. ' +
                 'The 2-D view and the tables show the same designs.';
  var NO_PLOTLY = 'Plots unavailable: the plotting library embedded in this page could not be ' +
                  'started in this browser';

  function setupControls() {
    var sx = document.getElementById('sel-x'), sy = document.getElementById('sel-y');
    var sz = document.getElementById('sel-z'), sc = document.getElementById('sel-colour');
    state.x = AXES[0].id;
    state.y = (AXES[1] || AXES[0]).id;
    state.z = (AXES[2] || AXES[0]).id;
    fillSelect(sx, AXES, state.x);
    fillSelect(sy, AXES, state.y);
    fillSelect(sz, AXES, state.z);
    var opts = D.pareto.colour_options.map(function (c) {
      return {id: c.key, label: c.label + unitText(c.unit)};
    });
    state.colour = opts.length ? opts[0].id : null;
    fillSelect(sc, opts, state.colour);
    if (!has3d) {
      document.getElementById('lab-z').style.display = 'none';
      document.getElementById('pareto3d').style.display = 'none';
    }
    sx.addEventListener('change', function () { state.x = sx.value; draw2d(); draw3d(); });
    sy.addEventListener('change', function () { state.y = sy.value; draw2d(); draw3d(); });
    sz.addEventListener('change', function () { state.z = sz.value; draw3d(); });
    sc.addEventListener('change', function () { state.colour = sc.value; draw2d(); draw3d(); });
    var ci = document.getElementById('chk-infeasible');
    ci.addEventListener('change', function () { state.infeasible = ci.checked; draw2d(); draw3d(); });
    var lx = document.getElementById('chk-logx'), ly = document.getElementById('chk-logy');
    lx.addEventListener('change', function () { state.logx = lx.checked; draw2d(); });
    ly.addEventListener('change', function () { state.logy = ly.checked; draw2d(); });
  }

  function setupFront() {
    var box = document.getElementById('pareto2d');
    if (!P.trial.length) {
      box.appendChild(el('p', {'class': 'hint'}, 'No trials to plot.'));
      return Promise.resolve();
    }
    if (!HAVE_PLOTLY) {
      box.appendChild(el('p', {'class': 'hint'}, NO_PLOTLY + '.'));
      return Promise.resolve();
    }
    return draw2d().then(function (gd) { gd.on('plotly_click', onPointClick); });
  }

  function setup3d() {
    if (!has3d || !P.trial.length) { return; }
    var box = document.getElementById('pareto3d');
    if (!HAVE_PLOTLY || !webgl()) {
      box.appendChild(el('p', {'class': 'hint'}, HAVE_PLOTLY ? NO_WEBGL : NO_PLOTLY + '.'));
      box.setAttribute('data-drawn', 'no');
      return;
    }
    state.ready3d = true;
    draw3d().then(function () {
      if (box.on) { box.on('plotly_click', onPointClick); }
      box.setAttribute('data-drawn', 'yes');
    }).catch(function (err) {
      box.replaceChildren(el('p', {'class': 'hint'}, '3-D view unavailable in this browser (' + err + ').'));
    });
  }

  function onPointClick(ev) {
    if (!ev || !ev.points || !ev.points.length) { return; }
    var pt = ev.points[0];
    if (pt.customdata === undefined || pt.customdata === null) { return; }
    showDesign(Number(pt.customdata), false);
  }

  /* ---------- plotly.js: embedded gzip-compressed, base64-encoded ---------- */
  function loadPlotly() {
    if (window.Plotly) { return Promise.resolve(); }
    var box = document.getElementById('plotly-js');
    if (!box) { return Promise.reject(new Error('plotly.js is missing from this page')); }
    if (typeof DecompressionStream === 'undefined' || typeof Response === 'undefined' ||
        typeof Blob === 'undefined' || !Blob.prototype.stream) {
      return Promise.reject(new Error('this browser cannot unpack it (it needs DecompressionStream: ' +
                                      'Chrome or Edge 80+, Firefox 113+, Safari 16.4+)'));
    }
    return Promise.resolve().then(function () {
      var bin = atob(box.textContent);
      var bytes = new Uint8Array(bin.length);
      for (var i = 0; i < bin.length; i++) { bytes[i] = bin.charCodeAt(i); }
      var stream = new Blob([bytes]).stream().pipeThrough(new DecompressionStream('gzip'));
      return new Response(stream).text();
    }).then(function (code) {
      (0, eval)(code);  // global scope: plotly.js sets window.Plotly
      if (!window.Plotly) { throw new Error('plotly.js did not start'); }
    });
  }

  /* ---------- values of the Pareto designs ---------- */
  function numeric(key, i) {
    var c = P.numeric[key];
    return c && i !== undefined ? c[i] : null;
  }
  function fanOf(i) { return P.categorical.fan && i !== undefined ? P.categorical.fan[i] : null; }
  /* A key number of a trial: the design's own values first, then its point. */
  function value(trial, key) {
    var d = DS.by_trial[String(trial)];
    if (d) {
      if (key === 'speed_ratio') { return d.speed_ratio; }
      var k = DS.key_columns.indexOf(key);
      if (k >= 0) { return d.key[k]; }
    }
    if (key === 'air_density_kg_m3') { return DS.air_density_kg_m3; }
    return numeric(key, INDEX[trial]);
  }

  /* The study's devices with this design's temperatures (the rows of report_data's
     DEVICE_COLUMNS): name, power_W, tj_max_C, mounting, junction_C, margin_K, breakdown_K. */
  function designDevices(trial) {
    var d = DS.by_trial[String(trial)];
    var cols = DS.device_columns;
    return D.inputs.devices.map(function (dev, k) {
      var row = d && d.devices[k];
      var out = {name: dev.name, power_W: dev.power_W, tj_max_C: dev.tj_max_C, mounting: null,
                 junction_C: null, margin_K: null, breakdown_K: null};
      if (!row) { return out; }
      var m = row[cols.indexOf('mounting')];
      out.mounting = typeof m === 'number' ? dev.mountings[m] : m;
      out.junction_C = row[cols.indexOf('junction_C')];
      out.margin_K = row[cols.indexOf('margin_K')];
      out.breakdown_K = {};
      BREAKDOWN.forEach(function (b) { out.breakdown_K[b[0]] = row[cols.indexOf(b[0])]; });
      return out;
    });
  }

  /* Fan and system curves of a Pareto design, as report_data.fan_system_curves gives them: the
     fan array's curve at rated speed scaled by the fan laws (flow × s, pressure × s²), the
     system curve on its grid with the operating point added. */
  function atSpeed(curve, s) {
    return {flow_m3_s: curve.flow_m3_s.map(function (q) { return q * s; }),
            pressure_Pa: curve.pressure_Pa.map(function (p) { return p * s * s; })};
  }
  function designCurves(trial) {
    var i = INDEX[trial], d = DS.by_trial[String(trial)];
    var out = {fan: null, name: null, count: null, arrangement: null,
               speed_ratio: d ? d.speed_ratio : null, air_density_kg_m3: DS.air_density_kg_m3,
               fan_curve: null, fan_curve_rated: null, stall_limit_m3_s: null,
               operating_point: null, system_curve: {flow_m3_s: [], pressure_Pa: []}};
    var qop = numeric('airflow_m3_s', i), pop = numeric('pressure_drop_Pa', i);
    if (qop !== null && pop !== null) { out.operating_point = {flow_m3_s: qop, pressure_Pa: pop}; }
    var label = fanOf(i), fan = label !== null ? FANS[label] : undefined;
    var s = out.speed_ratio;
    if (fan && s !== null) {
      out.fan = label;
      out.name = fan.name;
      out.count = fan.count;
      out.arrangement = fan.arrangement;
      out.fan_curve = atSpeed(fan, s);
      if (Math.abs(fan.speed_max - s) > 1e-9) { out.fan_curve_rated = atSpeed(fan, fan.speed_max); }
      if (fan.stall_limit_m3_s !== null) { out.stall_limit_m3_s = fan.stall_limit_m3_s * s; }
    }
    if (!d) { return out; }
    var n = d.system_Pa.length, qs = out.system_curve.flow_m3_s, ps = out.system_curve.pressure_Pa;
    var op = out.operating_point, placed = !op;
    for (var k = 0; k < n; k++) {
      var q = n > 1 ? d.system_q_max_m3_s * k / (n - 1) : 0;
      if (!placed && op.flow_m3_s <= q) {
        placed = true;
        if (op.flow_m3_s < q) { qs.push(op.flow_m3_s); ps.push(op.pressure_Pa); }
      }
      if (d.system_Pa[k] !== null) { qs.push(q); ps.push(d.system_Pa[k]); }
    }
    if (!placed) { qs.push(op.flow_m3_s); ps.push(op.pressure_Pa); }
    return out;
  }

  /* ---------- figures of a design ---------- */
  function maxOf(list) {
    var m = -Infinity;
    list.forEach(function (v) { if (v !== null && v > m) { m = v; } });
    return m;
  }
  function baseLayout(extra) {
    return Object.assign({font: FONT, paper_bgcolor: 'rgba(0,0,0,0)', plot_bgcolor: '#ffffff',
                          margin: {l: 60, r: 20, t: 30, b: 50}, hovermode: 'closest',
                          legend: {orientation: 'h', y: -0.25, x: 0}}, extra);
  }
  function axisStyle(title, extra) {
    return Object.assign({title: {text: title}, gridcolor: GRID, zerolinecolor: '#c9ccd0',
                          linecolor: '#9aa0a6', showline: true, mirror: true}, extra || {});
  }

  /* Fan-array curve(s) against the system curve, with the operating point and the stall
     region shaded; flows drawn in m³/h. */
  function fanSystemFigure(c) {
    var h = 3600, traces = [], pTop = 0;
    function perHour(list) { return list.map(function (q) { return q * h; }); }
    var sysc = c.system_curve || {flow_m3_s: [], pressure_Pa: []};
    var stall = c.stall_limit_m3_s, rated = c.fan_curve_rated, fan = c.fan_curve;
    if (rated && rated.flow_m3_s.length) {
      traces.push({type: 'scatter', x: perHour(rated.flow_m3_s), y: rated.pressure_Pa, mode: 'lines',
                   name: 'fans at top of speed range', line: {color: '#9aa0a6', dash: 'dot', width: 1.5},
                   hovertemplate: '%{x:.4g} m³/h, %{y:.4g} Pa<extra>top speed</extra>'});
      pTop = Math.max(pTop, maxOf(rated.pressure_Pa));
    }
    if (fan && fan.flow_m3_s.length) {
      var q = perHour(fan.flow_m3_s), p = fan.pressure_Pa, all = q.map(function (_, k) { return k; });
      pTop = Math.max(pTop, maxOf(p));
      var label = esc(c.fan || 'fan');
      var name = c.speed_ratio ? label + ' at ' + (c.speed_ratio * 100).toFixed(0) + ' % speed' : label;
      var stable = all;
      if (stall) {
        var qs = stall * h;
        var unstable = all.filter(function (k) { return q[k] <= qs * (1 + 1e-9); });
        stable = all.filter(function (k) { return q[k] >= qs * (1 - 1e-9); });
        if (unstable.length > 1) {
          traces.push({type: 'scatter', x: unstable.map(function (k) { return q[k]; }),
                       y: unstable.map(function (k) { return p[k]; }), mode: 'lines',
                       name: 'fans, stall region', line: {color: ACCENT, dash: 'dash', width: 2},
                       hovertemplate: '%{x:.4g} m³/h, %{y:.4g} Pa<extra>stall region</extra>'});
        }
      }
      traces.push({type: 'scatter', x: stable.map(function (k) { return q[k]; }),
                   y: stable.map(function (k) { return p[k]; }), mode: 'lines', name: name,
                   line: {color: ACCENT, width: 2.5},
                   hovertemplate: '%{x:.4g} m³/h, %{y:.4g} Pa<extra>fans</extra>'});
    }
    if (sysc.flow_m3_s.length) {
      traces.push({type: 'scatter', x: perHour(sysc.flow_m3_s), y: sysc.pressure_Pa, mode: 'lines',
                   name: 'system (sink and extra losses)', line: {color: INK, width: 2},
                   hovertemplate: '%{x:.4g} m³/h, %{y:.4g} Pa<extra>system</extra>'});
    }
    var op = c.operating_point;
    if (op) {
      traces.push({type: 'scatter', x: [op.flow_m3_s * h], y: [op.pressure_Pa], mode: 'markers',
                   name: 'operating point',
                   marker: {size: 11, color: WARM, line: {color: INK, width: 1.5}},
                   hovertemplate: 'operating point<br>%{x:.4g} m³/h, %{y:.4g} Pa<extra></extra>'});
      pTop = Math.max(pTop, op.pressure_Pa * 1.2);
    }
    if (!(pTop > 0)) { pTop = sysc.pressure_Pa.length ? maxOf(sysc.pressure_Pa) : 1; }
    var shapes = [], notes = [];
    if (stall) {
      shapes.push({type: 'rect', xref: 'x', yref: 'paper', x0: 0, x1: stall * h, y0: 0, y1: 1,
                   fillcolor: 'rgba(181,101,43,0.12)', line: {width: 0}, layer: 'below'});
      notes.push({x: stall * h / 2, y: 1, xref: 'x', yref: 'paper', yanchor: 'top',
                  text: 'stall region at this speed', showarrow: false, font: {color: WARM, size: 11}});
    }
    return {data: traces, layout: baseLayout({
      height: 340, shapes: shapes, annotations: notes,
      xaxis: axisStyle('airflow [m³/h]', {rangemode: 'tozero'}),
      yaxis: axisStyle('static pressure [Pa]', {range: [0, pTop * 1.08]})})};
  }

  /* Stacked temperature rises from the inlet air to each junction, one bar per device, with
     each device's allowed rise (Tj,max − inlet air) marked. */
  function breakdownFigure(devices, ambient) {
    var names = devices.map(function (d) { return esc(d.name); });
    var traces = BREAKDOWN.map(function (b) {
      return {type: 'bar', x: names, name: b[1], marker: {color: b[2]},
              y: devices.map(function (d) {
                var v = (d.breakdown_K || {})[b[0]];
                return v === undefined ? null : v;
              }),
              hovertemplate: '%{x}: %{y:.3g} K<extra>' + esc(b[1]) + '</extra>'};
    });
    if (ambient !== null && ambient !== undefined) {
      traces.push({type: 'scatter', x: names, mode: 'markers',
                   y: devices.map(function (d) { return d.tj_max_C - ambient; }),
                   name: 'allowed rise (Tj,max − inlet air)',
                   marker: {symbol: 'line-ew-open', size: 34, color: WARM, line: {width: 2.5, color: WARM}},
                   hovertemplate: '%{x}: allowed %{y:.3g} K<extra></extra>'});
    }
    return {data: traces, layout: baseLayout({
      height: 340, barmode: 'stack', bargap: 0.45,
      xaxis: axisStyle('device', {type: 'category'}),
      yaxis: axisStyle('temperature rise above inlet air [K]', {rangemode: 'tozero'})})};
  }

  /* ---------- uncertainty band of a design (sinkopt.model.uncertainty) ---------- */
  function bandFigure(band, devices) {
    var names = devices.map(function (d) { return esc(d.name); });
    var col = function (k) { return band.devices.map(function (r) { return r ? r[k] : null; }); };
    var nominal = col(0), median = col(1), p95 = col(2), p99 = col(3), corner = col(4);
    var limits = devices.map(function (d) { return d.tj_max_C; });
    var traces = [
      {type: 'bar', orientation: 'h', y: names, base: median,
       x: p99.map(function (v, k) { return v === null || median[k] === null ? null : v - median[k]; }),
       name: 'median to P99', marker: {color: 'rgba(31,119,180,0.35)'},
       hovertemplate: '%{y}: median %{base:.4g} °C, P99 %{x:.3g} K above<extra></extra>'},
      {type: 'scatter', mode: 'markers', y: names, x: nominal, name: 'nominal',
       marker: {color: '#1f77b4', size: 9}, hovertemplate: '%{y}: nominal %{x:.4g} °C<extra></extra>'},
      {type: 'scatter', mode: 'markers', y: names, x: p95, name: 'P95',
       marker: {color: '#1f77b4', symbol: 'line-ns-open', size: 16, line: {width: 2}},
       hovertemplate: '%{y}: P95 %{x:.4g} °C<extra></extra>'},
      {type: 'scatter', mode: 'markers', y: names, x: corner, name: 'pessimistic corner',
       marker: {color: '#d62728', symbol: 'diamond-open', size: 10, line: {width: 2}},
       hovertemplate: '%{y}: pessimistic corner %{x:.4g} °C<extra></extra>'},
      {type: 'scatter', mode: 'markers', y: names, x: limits, name: 'Tj,max',
       marker: {color: WARM, symbol: 'line-ns', size: 22, line: {width: 3, color: WARM}},
       hovertemplate: '%{y}: limit %{x:.4g} °C<extra></extra>'}];
    return {data: traces, layout: baseLayout({
      height: 170 + 34 * names.length, barmode: 'overlay',
      legend: {orientation: 'h', y: -0.35, x: 0}, margin: {l: 60, r: 20, t: 20, b: 110},
      yaxis: axisStyle('', {type: 'category', autorange: 'reversed'}),
      xaxis: axisStyle('junction temperature [°C]')})};
  }

  function sensitivityFigure(band) {
    var items = band.sensitivity.slice().reverse();
    return {data: [{type: 'bar', orientation: 'h',
                    y: items.map(function (s) { return esc(s[0]); }),
                    x: items.map(function (s) { return s[1]; }),
                    marker: {color: '#1f77b4'},
                    hovertemplate: '%{y}: %{x:.0%} of the variance<extra></extra>'}],
            layout: baseLayout({height: 110 + 26 * items.length, showlegend: false,
              margin: {l: 230, r: 20, t: 20, b: 50},
              xaxis: axisStyle('share of the junction-temperature variance (first order)',
                               {range: [0, 1], tickformat: '.0%'}),
              yaxis: axisStyle('', {type: 'category'})})};
  }

  /* ---------- drawings: report_data.sink_drawing, in the browser ---------- */
  /* Python's format(v, '.<d>g'). */
  function gfmt(v, d) {
    if (v === 0) { return '0'; }
    if (!isFinite(v)) { return String(v); }
    var parts = v.toExponential(d - 1).split('e'), exp = parseInt(parts[1], 10);
    function strip(s) { return s.indexOf('.') >= 0 ? s.replace(/0+$/, '').replace(/\.$/, '') : s; }
    if (exp < -4 || exp >= d) {
      return strip(parts[0]) + 'e' + (exp < 0 ? '-' : '+') + (Math.abs(exp) < 10 ? '0' : '') + Math.abs(exp);
    }
    return strip(v.toFixed(Math.max(0, d - 1 - exp)));
  }
  function dimShapes(x1, y1, x2, y2, text, tx, ty, anchor) {
    return [{kind: 'dim', x1: x1, y1: y1, x2: x2, y2: y2},
            {kind: 'text', x: tx, y: ty, text: text, anchor: anchor || 'middle', cls: 'dimtext'}];
  }
  /* To-scale front view (looking along the flow) and plan view (from the fin side, inlet at the
     bottom) of a plate-fin sink, as shapes in millimetres: the same shapes as
     report_data.sink_drawing (the tests compare the two). */
  function sinkDrawing(params, devices, scale) {
    var W = Number(params.width_mm), L = Number(params.length_mm), H = Number(params.fin_height_mm);
    var t = Number(params.fin_thickness_mm), N = Math.round(Number(params.n_fins));
    var tb = Number(params.base_thickness_mm);
    var gap = (W - N * t) / Math.max(N - 1, 1), pitch = t + gap;
    var px = 1 / scale, font = 11 * px, i;
    function view(x0, y0, x1, y1, shapes) {
      return {view_box: [x0, y0, x1 - x0, y1 - y0], width_px: (x1 - x0) * scale,
              height_px: (y1 - y0) * scale, font_mm: font, scale_px_per_mm: scale, shapes: shapes};
    }
    var front = [{kind: 'text', x: W / 2, y: -10 * px, text: N + ' fins, t ' + gfmt(t, 3) + ' mm, gap ' +
                  gfmt(gap, 3) + ' mm', anchor: 'middle', cls: 'note'},
                 {kind: 'rect', x: 0, y: H, w: W, h: tb, cls: 'metal'}];
    for (i = 0; i < N; i++) { front.push({kind: 'rect', x: i * pitch, y: 0, w: t, h: H, cls: 'metal'}); }
    var yb = H + tb, xr = W + 12 * px;
    front = front.concat(dimShapes(0, yb + 14 * px, W, yb + 14 * px, 'W ' + gfmt(W, 4) + ' mm', W / 2, yb + 28 * px),
                         dimShapes(xr, 0, xr, H, 'H ' + gfmt(H, 3) + ' mm', xr + 6 * px, H / 2 + 4 * px, 'start'),
                         dimShapes(xr, H, xr, yb, 'base ' + gfmt(tb, 3) + ' mm', xr + 6 * px, H + tb / 2 + 4 * px, 'start'));
    var frontView = view(-6 * px, -24 * px, W + 100 * px, yb + 36 * px, front);

    var plan = [{kind: 'rect', x: 0, y: 0, w: W, h: L, cls: 'base'}];
    for (i = 0; i < N; i++) { plan.push({kind: 'rect', x: i * pitch, y: 0, w: t, h: L, cls: 'fin'}); }
    (devices || []).forEach(function (d) {
      var cx = Number(d.center_x_mm), cy = Number(d.center_y_mm);
      var sx = Number(d.size_x_mm), sy = Number(d.size_y_mm);
      plan.push({kind: 'rect', x: cx - sx / 2, y: L - (cy + sy / 2), w: sx, h: sy, cls: 'device'});
      plan.push({kind: 'text', x: cx, y: L - cy + 4 * px, text: String(d.name), anchor: 'middle',
                 cls: 'devtext'});
    });
    var xa = -22 * px;
    plan.push({kind: 'arrow', x1: xa, y1: L, x2: xa, y2: Math.max(L - 60 * px, 0)});
    plan.push({kind: 'text', x: xa, y: L + 14 * px, text: 'air in', anchor: 'middle', cls: 'note'});
    plan.push({kind: 'text', x: W / 2, y: -8 * px, text: 'outlet edge (devices under the base, dashed)',
               anchor: 'middle', cls: 'note'});
    plan = plan.concat(dimShapes(0, L + 14 * px, W, L + 14 * px, 'W ' + gfmt(W, 4) + ' mm', W / 2, L + 28 * px),
                       dimShapes(xr, 0, xr, L, 'L ' + gfmt(L, 4) + ' mm', xr + 6 * px, L / 2 + 4 * px, 'start'));
    var planView = view(-44 * px, -22 * px, W + 90 * px, L + 36 * px, plan);
    return {front: frontView, plan: planView, gap_mm: gap, pitch_mm: pitch};
  }

  function drawSvg(view, title) {
    var vb = view.view_box;
    var svg = svgEl('svg', {'class': 'sink', width: view.width_px.toFixed(1), height: view.height_px.toFixed(1),
                            viewBox: vb.join(' '), role: 'img'});
    var t = svgEl('title', {});
    t.textContent = title;
    svg.appendChild(t);
    var px = 1 / view.scale_px_per_mm;
    view.shapes.forEach(function (s) {
      if (s.kind === 'rect') {
        svg.appendChild(svgEl('rect', {x: s.x, y: s.y, width: Math.max(s.w, 0), height: Math.max(s.h, 0),
                                       'class': s.cls || ''}));
      } else if (s.kind === 'dim') {
        svg.appendChild(svgEl('line', {x1: s.x1, y1: s.y1, x2: s.x2, y2: s.y2, 'class': 'dim'}));
        var dx = s.x2 - s.x1, dy = s.y2 - s.y1, len = Math.sqrt(dx * dx + dy * dy) || 1;
        var nx = -dy / len * 4 * px, ny = dx / len * 4 * px;
        [[s.x1, s.y1], [s.x2, s.y2]].forEach(function (p) {
          svg.appendChild(svgEl('line', {x1: p[0] - nx, y1: p[1] - ny, x2: p[0] + nx, y2: p[1] + ny,
                                         'class': 'dim'}));
        });
      } else if (s.kind === 'arrow') {
        svg.appendChild(svgEl('line', {x1: s.x1, y1: s.y1, x2: s.x2, y2: s.y2, 'class': 'arrow'}));
        var ax = s.x2 - s.x1, ay = s.y2 - s.y1, al = Math.sqrt(ax * ax + ay * ay) || 1;
        var ux = ax / al, uy = ay / al, h = 9 * px, w = 5 * px;
        var pts = [[s.x2, s.y2], [s.x2 - ux * h - uy * w, s.y2 - uy * h + ux * w],
                   [s.x2 - ux * h + uy * w, s.y2 - uy * h - ux * w]];
        svg.appendChild(svgEl('polygon', {points: pts.map(function (p) { return p.join(','); }).join(' '),
                                          'class': 'arrow'}));
      } else if (s.kind === 'text') {
        var tx = svgEl('text', {x: s.x, y: s.y, 'text-anchor': s.anchor || 'start',
                                'font-size': (s.cls === 'devtext' ? 0.95 : 1) * view.font_mm,
                                'class': s.cls || ''});
        tx.textContent = s.text;
        svg.appendChild(tx);
      }
    });
    return svg;
  }

  /* ---------- design panel ---------- */
  var KEYS = [
    ['volume_cm3', 'sink volume', 'cm³', 1],
    ['mass_kg', 'sink mass', 'kg', 1],
    ['fan_power_W', 'fan electrical power', 'W', 1],
    ['noise_dBA', 'fan noise (estimate)', 'dB(A)', 1],
    ['airflow_m3_s', 'airflow', 'm³/h', 3600],
    ['pressure_drop_Pa', 'system pressure drop', 'Pa', 1],
    ['fan_path_loss_Pa', 'of it, the air path (fans to fins, discharge)', 'Pa', 1],
    ['sink_resistance_K_per_W', 'sink resistance (base to inlet air)', 'K/W', 1],
    ['worst_margin_K', 'worst junction margin', 'K', 1],
    ['air_rise_K', 'air temperature rise', 'K', 1],
    ['air_outlet_C', 'air outlet temperature', '°C', 1],
    ['speed_ratio', 'fan speed', '% of rated', 100],
    ['fin_gap_mm', 'fin gap', 'mm', 1],
    ['fin_aspect', 'fin height / gap', '', 1],
    ['channel_velocity_m_s', 'channel air velocity', 'm/s', 1],
    ['heat_transfer_coefficient_W_m2K', 'heat transfer coefficient', 'W/(m²·K)', 1],
    ['fin_efficiency', 'fin efficiency', '', 1]
  ];
  var DIMS = [['width_mm', 'base width W', 'mm'], ['length_mm', 'base length L', 'mm'],
              ['fin_height_mm', 'fin height H', 'mm'], ['fin_thickness_mm', 'fin thickness t', 'mm'],
              ['n_fins', 'number of fins', ''], ['base_thickness_mm', 'base thickness', 'mm']];

  function keyBox(key, label, value, unit) {
    var box = el('div', {'data-key': key});
    box.appendChild(el('span', {'class': 'k'}, label));
    box.appendChild(el('span', {'class': 'v'}, fmt(value)));
    if (unit) { box.appendChild(el('span', {'class': 'u'}, unit)); }
    return box;
  }

  function table(headers, rows, cls) {
    var t = el('table', cls ? {'class': cls} : null);
    var tr = el('tr');
    headers.forEach(function (h) { tr.appendChild(el('th', {scope: 'col'}, h)); });
    var thead = el('thead');
    thead.appendChild(tr);
    t.appendChild(thead);
    var tb = el('tbody');
    rows.forEach(function (r) {
      var row = el('tr');
      r.forEach(function (c) {
        var td = el('td', null, typeof c === 'number' ? fmt(c) : ((c === null || c === undefined) ? '–' : c));
        row.appendChild(td);
      });
      tb.appendChild(row);
    });
    t.appendChild(tb);
    return t;
  }

  function copyText(text, note) {
    function done(ok) { note.textContent = ok ? 'copied' : 'select the text and copy it'; }
    if (navigator.clipboard && navigator.clipboard.writeText) {
      navigator.clipboard.writeText(text).then(function () { done(true); }, function () { done(fallback()); });
    } else {
      done(fallback());
    }
    function fallback() {
      var ta = el('textarea');
      ta.value = text;
      ta.style.position = 'fixed';
      ta.style.opacity = '0';
      document.body.appendChild(ta);
      ta.select();
      var ok = false;
      try { ok = document.execCommand('copy'); } catch (e) { ok = false; }
      document.body.removeChild(ta);
      return ok;
    }
  }

  function showOther(panel, trial) {
    var i = INDEX[trial];
    var h = el('div', {'class': 'dhead'});
    h.appendChild(el('h3', {id: 'design-title'}, 'Trial ' + trial));
    var st = i === undefined ? 'unknown' : P.status[i];
    h.appendChild(el('span', {'class': 'badge ' + (st === 'infeasible' ? 'bad' : 'ok')},
                     st === 'infeasible' ? 'infeasible' : 'feasible, not on the front'));
    panel.appendChild(h);
    panel.appendChild(el('p', {'class': 'note'}, 'This trial is not a Pareto design, so the report ' +
      'keeps only its summary (' + (i !== undefined && P.exact[i] ? 'exact series' : 'search model') +
      '). Run sinkopt evaluate with its values from trials.csv for the full detail.'));
    if (i === undefined) { return; }
    var keys = el('div', {'class': 'keys'});
    [['volume_cm3', 'sink volume', 'cm³', 1], ['fan_power_W', 'fan electrical power', 'W', 1],
     ['worst_margin_K', 'worst junction margin', 'K', 1], ['airflow_m3_s', 'airflow', 'm³/h', 3600]]
      .forEach(function (k) {
        var v = numeric(k[0], i);
        keys.appendChild(keyBox(k[0], k[1], v === null ? null : v * k[3], k[2]));
      });
    panel.appendChild(keys);
  }

  function showDesign(trial, scroll) {
    state.selected = trial;
    var panel = document.getElementById('design-panel');
    panel.replaceChildren();
    panel.setAttribute('data-trial', String(trial));
    document.querySelectorAll('#pareto-table tbody tr').forEach(function (tr) {
      tr.classList.toggle('selected', tr.getAttribute('data-trial') === String(trial));
    });
    draw2d();
    draw3d();
    if (!DS.by_trial[String(trial)]) {
      showOther(panel, trial);
    } else {
      renderDesign(panel, trial);
    }
    if (scroll) { document.getElementById('design').scrollIntoView({block: 'start'}); }
    if (history.replaceState) { history.replaceState(null, '', '#trial-' + trial); }
  }

  /* Two captioned plot boxes side by side in ``panel``; returns the boxes. */
  function figurePair(panel, left, right) {
    var grid = el('div', {'class': 'grid2'}), boxes = [];
    [left, right].forEach(function (spec) {
      var fig = el('figure'), box = el('div', {id: spec[1], 'class': 'plot'});
      fig.appendChild(el('figcaption', null, spec[0]));
      fig.appendChild(box);
      grid.appendChild(fig);
      boxes.push(box);
    });
    panel.appendChild(grid);
    return boxes;
  }

  function renderDesign(panel, trial) {
    var d = DS.by_trial[String(trial)], i = INDEX[trial], fan = fanOf(i);
    var devices = designDevices(trial);
    var head = el('div', {'class': 'dhead'});
    head.appendChild(el('h3', {id: 'design-title'}, 'Trial ' + trial));
    if (fan) { head.appendChild(el('span', {'class': 'fan'}, 'fan: ' + fan)); }
    head.appendChild(el('span', {'class': 'badge ' + (d.feasible ? 'ok' : 'bad')},
                        d.feasible ? 'meets every constraint' : 'violates a constraint'));
    head.appendChild(el('span', {'class': 'note'}, 'exact spreading series'));
    panel.appendChild(head);

    panel.appendChild(el('h4', null, 'Geometry'));
    var dims = el('div', {'class': 'keys'});
    DIMS.forEach(function (k) { dims.appendChild(keyBox(k[0], k[1], numeric(k[0], i), k[2])); });
    panel.appendChild(dims);

    panel.appendChild(el('h4', null, 'Results'));
    var keys = el('div', {'class': 'keys'});
    KEYS.forEach(function (k) {
      var v = value(trial, k[0]);
      if (v === undefined) { v = null; }
      if (k[0] === 'noise_dBA' && v === null) { return; }
      if ((k[0] === 'speed_ratio' || k[0] === 'fan_path_loss_Pa') && v === null) { return; }
      if (!fan && (k[0] === 'fan_power_W' || k[0] === 'noise_dBA')) { return; }
      keys.appendChild(keyBox(k[0], k[1], v === null ? null : v * k[3], k[2]));
    });
    panel.appendChild(keys);
    panel.appendChild(el('p', {'class': 'note'},
      'Air: in at ' + fmt(DS.ambient_C) + ' °C, out at ' + fmt(value(trial, 'air_outlet_C')) +
      ' °C (mixed mean), rise ' + fmt(value(trial, 'air_rise_K'), 3) + ' K; site air density ' +
      fmt(DS.air_density_kg_m3, 3) + ' kg/m³.'));

    panel.appendChild(el('h4', null, 'Drawings (to scale, mm)'));
    var params = {};
    DIMS.forEach(function (k) { params[k[0]] = numeric(k[0], i); });
    var drawing = sinkDrawing(params, D.inputs.devices, DS.drawing_scale_px_per_mm);
    var drawings = el('div', {'class': 'drawings'});
    var f1 = el('figure');
    f1.appendChild(el('figcaption', null, 'Front view, looking along the flow'));
    f1.appendChild(drawSvg(drawing.front, 'front view of trial ' + trial));
    var f2 = el('figure');
    f2.appendChild(el('figcaption', null, 'Plan view from the fin side, air entering at the bottom'));
    f2.appendChild(drawSvg(drawing.plan, 'plan view of trial ' + trial));
    drawings.appendChild(f1);
    drawings.appendChild(f2);
    panel.appendChild(drawings);
    /* the drawing files beside the page (sinkopt.results.drawing), or how to write them */
    var files = el('p', {'class': 'note', id: 'drawing-files'});
    var DW = D.drawings || {folder: 'drawings', trials: []};
    if (DW.trials.indexOf(trial) >= 0) {
      files.appendChild(document.createTextNode('Drawing files: '));
      [['.svg', 'SVG drawing'], ['.dxf', 'DXF drawing'], ['-sheet.html', 'design sheet (prints on A4)']]
        .forEach(function (f, k) {
          if (k) { files.appendChild(document.createTextNode(' · ')); }
          files.appendChild(el('a', {href: DW.folder + '/design-' + trial + f[0], target: '_blank',
                                     rel: 'noopener'}, f[1]));
        });
      files.appendChild(document.createTextNode(' (mounting holes left to you).'));
    } else {
      files.textContent = 'Drawing files (SVG, DXF, design sheet): sinkopt drawing RESULTS_DIR --trial ' +
        trial + ' writes them.';
    }
    panel.appendChild(files);

    var curves = designCurves(trial);
    var pair = figurePair(panel, [curves.fan_curve ?
      'Fans against the system, at the site air density' + (curves.name ? ' (' + curves.name +
        (curves.count > 1 ? ', ' + curves.count + ' in ' + curves.arrangement : '') + ')' : '') :
      'System curve and the given airflow, at the site air density', 'fan-system'],
      ['Temperature rise from the inlet air to each junction', 'breakdown']);
    var fs = pair[0], bd = pair[1];
    function drawFigures() {
      if (!fs.isConnected) { return; }  // another design was opened meanwhile
      fs.replaceChildren();
      bd.replaceChildren();
      if (HAVE_PLOTLY) {
        var f = fanSystemFigure(curves), b = breakdownFigure(devices, DS.ambient_C);
        Plotly.newPlot(fs, f.data, f.layout, CONFIG);
        Plotly.newPlot(bd, b.data, b.layout, CONFIG);
      } else {
        fs.appendChild(el('p', {'class': 'hint'}, NO_PLOTLY + '.'));
        bd.appendChild(el('p', {'class': 'hint'}, NO_PLOTLY + '.'));
      }
    }
    if (plotlyState === 'loading') {  // a row clicked while plotly.js is being unpacked
      fs.appendChild(el('p', {'class': 'hint'}, 'Loading the plots…'));
      plotlyReady.then(drawFigures);
    } else {
      drawFigures();
    }

    panel.appendChild(el('h4', null, 'Devices'));
    var rows = devices.map(function (dv) {
      var b = dv.breakdown_K || {};
      return [dv.name, dv.power_W, dv.mounting, dv.junction_C, dv.tj_max_C, dv.margin_K,
              b.air_heating_upstream, b.sink_and_spreading, b.mounting_stack, b.junction_to_case];
    });
    var dt = table(['device', 'power [W]', 'mounting', 'Tj [°C]', 'Tj,max [°C]', 'margin [K]',
                    'upstream air [K]', 'sink + spreading [K]', 'mounting [K]', 'junction–case [K]'],
                   rows, 'devices');
    dt.id = 'design-devices';
    dt.querySelectorAll('tbody tr').forEach(function (tr, k) {
      var m = devices[k].margin_K;
      if (m !== null && m < 0) { tr.children[5].classList.add('neg'); }
    });
    var wrap = el('div', {'class': 'scroll'});
    wrap.appendChild(dt);
    panel.appendChild(wrap);

    if (d.band) {
      var U = D.uncertainty || {};
      panel.appendChild(el('h4', null, 'Uncertainty band'));
      panel.appendChild(el('p', {'class': 'note', id: 'band-summary'},
        'Every uncertain input carried through the model, fan point included (' + U.samples +
        ' seeded samples, seed ' + U.seed + '; inputs listed under Study inputs). Probability ' +
        'that a junction exceeds its limit: ' + fmt(100 * d.band.p_exceed, 3) + ' %. Worst margin: ' +
        fmt(d.band.p95_margin_K, 3) + ' K at the 5th percentile, ' + fmt(d.band.corner_margin_K, 3) +
        ' K at the pessimistic corner.' + (d.band.critical ? ' Ranked on ' + d.band.critical +
        ', the device with the least nominal margin.' : '')));
      var bpair = figurePair(panel,
        ['Junction temperatures: nominal, median to P99, P95, pessimistic corner', 'band-plot'],
        ['What to measure first: the inputs behind the spread', 'sensitivity-plot']);
      var bb = bpair[0], sb = bpair[1];
      var brows = devices.map(function (dv, k) {
        var r = d.band.devices[k] || [];
        return [dv.name, r[0], r[1], r[2], r[3], r[4], dv.tj_max_C];
      });
      var bt = table(['device', 'nominal [°C]', 'median [°C]', 'P95 [°C]', 'P99 [°C]',
                      'pessimistic [°C]', 'Tj,max [°C]'], brows, 'band');
      bt.id = 'design-band';
      var bw = el('div', {'class': 'scroll'});
      bw.appendChild(bt);
      panel.appendChild(bw);
      var drawBand = function () {
        if (!bb.isConnected) { return; }
        bb.replaceChildren();
        sb.replaceChildren();
        if (HAVE_PLOTLY) {
          var f = bandFigure(d.band, devices), g = sensitivityFigure(d.band);
          Plotly.newPlot(bb, f.data, f.layout, CONFIG);
          Plotly.newPlot(sb, g.data, g.layout, CONFIG);
        } else {
          bb.appendChild(el('p', {'class': 'hint'}, NO_PLOTLY + '.'));
        }
      };
      if (plotlyState === 'loading') { plotlyReady.then(drawBand); } else { drawBand(); }
    }

    if (d.failed) {
      var ff = d.failed;
      panel.appendChild(el('h4', null, 'With one fan stopped'));
      if (!ff.applies) {
        panel.appendChild(el('p', {'class': 'note', id: 'failed-fan-summary'}, 'The check ' + ff.note + '.'));
      } else {
        panel.appendChild(el('p', {'class': 'note', id: 'failed-fan-summary'},
          'One fan of the array stopped, the others at the same setting: airflow ' +
          fmt(ff.airflow_m3_s * 3600, 3) + ' m³/h.'));
        var frows = devices.map(function (dv, k) {
          return [dv.name, ff.tj_C[k], ff.tj_C[k] === null ? null : dv.tj_max_C - ff.tj_C[k], dv.tj_max_C];
        });
        var ft = table(['device', 'Tj, one fan stopped [°C]', 'margin [K]', 'Tj,max [°C]'], frows, 'failed');
        ft.id = 'design-failed-fan';
        var fw = el('div', {'class': 'scroll'});
        fw.appendChild(ft);
        panel.appendChild(fw);
      }
    }

    if (d.still) {
      var st = d.still;
      panel.appendChild(el('h4', null, 'When the fans stop'));
      panel.appendChild(el('p', {'class': 'note', id: 'still-summary'},
        'Still air (natural convection and radiation). After every fan stops at full load, ' +
        (st.time_to_limit_s === null ? 'no junction reaches its limit.' :
          st.first + ' reaches its limit after ' + fmt(st.time_to_limit_s, 3) + ' s: derate or ' +
          'shut down before then.') + ' With no airflow the sink carries at most ' +
        fmt(100 * st.largest_load, 3) + ' % of the load.'));
      var srows = devices.map(function (dv, k) {
        return [dv.name, fmt(100 * st.load_fraction, 3) + ' %', st.steady_C[k], dv.tj_max_C];
      });
      var stt = table(['device', 'load', 'Tj, fans stopped [°C]', 'Tj,max [°C]'], srows, 'still');
      stt.id = 'design-still';
      var sw = el('div', {'class': 'scroll'});
      sw.appendChild(stt);
      panel.appendChild(sw);
      var sfig = el('figure');
      sfig.appendChild(el('figcaption', null, 'Junction temperatures after a fan stop at full load (t = 0)'));
      var sbox = el('div', {id: 'fan-stop-plot', 'class': 'plot'});
      sfig.appendChild(sbox);
      panel.appendChild(sfig);
      var drawStill = function () {
        if (!sbox.isConnected || !HAVE_PLOTLY) { return; }
        var t = st.t_s.map(function (v) { return Math.max(v, 0.01); });
        var traces = devices.map(function (dv, k) {
          return {type: 'scatter', mode: 'lines', x: t, y: st.tj_C[k], name: esc(dv.name),
                  line: {color: PALETTE[k % PALETTE.length]},
                  hovertemplate: '%{x:.3g} s: %{y:.4g} °C<extra>' + esc(dv.name) + '</extra>'};
        });
        traces.push({type: 'scatter', mode: 'lines', x: [t[0], t[t.length - 1]],
                     y: [devices[0].tj_max_C, devices[0].tj_max_C], name: 'Tj,max (' + esc(devices[0].name) + ')',
                     line: {color: WARM, dash: 'dash'}});
        Plotly.newPlot(sbox, traces, baseLayout({height: 320,
          xaxis: axisStyle('time after the fan stop [s]', {type: 'log'}),
          yaxis: axisStyle('junction temperature [°C]')}), CONFIG);
      };
      if (plotlyState === 'loading') { plotlyReady.then(drawStill); } else { drawStill(); }
    }

    if (d.profile) {
      var lp = d.profile;
      panel.appendChild(el('h4', null, 'Load profile'));
      var worst = null;
      devices.forEach(function (dv, k) {
        var m = dv.tj_max_C - lp.peak_C[k];
        if (lp.peak_C[k] !== null && (worst === null || m < worst[1])) { worst = [dv.name, m, lp.peak_t_s[k]]; }
      });
      panel.appendChild(el('p', {'class': 'note', id: 'profile-summary'},
        'Fans running, ' + (lp.start === 'periodic' ? 'the profile repeated (its periodic steady state)' :
          lp.start === 'steady' ? 'from the steady state at its first powers' : 'from cold (ambient)') +
        (worst ? '. The least margin at a peak: ' + worst[0] + ', ' + fmt(worst[1], 3) + ' K at ' +
          fmt(worst[2], 4) + ' s.' : '.')));
      var prow = devices.map(function (dv, k) {
        return [dv.name, lp.peak_C[k], lp.peak_t_s[k], dv.tj_max_C];
      });
      var ptab = table(['device', 'peak Tj [°C]', 'at [s]', 'Tj,max [°C]'], prow, 'profile');
      ptab.id = 'design-profile';
      var pw = el('div', {'class': 'scroll'});
      pw.appendChild(ptab);
      panel.appendChild(pw);
      var pfig = el('figure');
      pfig.appendChild(el('figcaption', null, 'Junction temperatures through the load profile'));
      var pbox = el('div', {id: 'profile-plot', 'class': 'plot'});
      pfig.appendChild(pbox);
      panel.appendChild(pfig);
      var drawProfile = function () {
        if (!pbox.isConnected || !HAVE_PLOTLY) { return; }
        var traces = devices.map(function (dv, k) {
          return {type: 'scatter', mode: 'lines', x: lp.t_s, y: lp.tj_C[k], name: esc(dv.name),
                  line: {color: PALETTE[k % PALETTE.length]},
                  hovertemplate: '%{x:.4g} s: %{y:.4g} °C<extra>' + esc(dv.name) + '</extra>'};
        });
        Plotly.newPlot(pbox, traces, baseLayout({height: 320,
          xaxis: axisStyle('time in the profile [s]'),
          yaxis: axisStyle('junction temperature [°C]')}), CONFIG);
      };
      if (plotlyState === 'loading') { plotlyReady.then(drawProfile); } else { drawProfile(); }
    }

    panel.appendChild(el('h4', null, 'Warnings'));
    if (d.warnings.length) {
      var ul = el('ul', {'class': 'warnings'});
      d.warnings.forEach(function (k) { ul.appendChild(el('li', null, DS.warnings[k])); });
      panel.appendChild(ul);
    } else {
      panel.appendChild(el('p', {'class': 'note'}, 'None: every correlation within its range, no stall.'));
    }
    if (d.spreading) {
      var model = DS.spreading_models[d.spreading[0]] || [null, null], largest = null;
      var parts = devices.map(function (dv, k) {
        var v = d.spreading[1][k];
        if (v !== null && (largest === null || Math.abs(v) > largest)) { largest = Math.abs(v); }
        return dv.name + ' ' + (v === null ? '–' : (v >= 0 ? '+' : '') + fmt(v, 2)) + ' K';
      });
      panel.appendChild(el('p', {'class': 'note', id: 'spreading-check'},
        'Spreading check: junction temperatures with the exact series minus the search model (' +
        model[0] + '): largest ' + fmt(largest, 2) + ' K (' + parts.join(', ') + ').'));
    }

    panel.appendChild(el('h4', null, 'Reproduce this design'));
    var command = DS.command_prefix + d.command;
    var cmd = el('div', {'class': 'cmd'});
    var pre = el('pre', {id: 'evaluate-command'}, command);
    var btn = el('button', {type: 'button', 'class': 'copy'}, 'Copy command');
    var note = el('span', {'class': 'copied', 'aria-live': 'polite'});
    btn.addEventListener('click', function () { copyText(command, note); });
    cmd.appendChild(pre);
    cmd.appendChild(btn);
    cmd.appendChild(note);
    panel.appendChild(cmd);
  }

  /* ---------- sortable table of the Pareto designs ---------- */
  function tableValue(trial, key) {
    var d = DS.by_trial[String(trial)];
    if (key === 'trial') { return trial; }
    if (key === 'fan') { return fanOf(INDEX[trial]); }
    if (P.categorical[key]) { return P.categorical[key][INDEX[trial]]; }
    if (key === 'n_warnings') { return d ? d.warnings.length : null; }
    var v = value(trial, key);
    return v === undefined ? null : v;
  }

  function buildTable() {
    var box = document.getElementById('pareto-table-box');
    var cols = D.table.columns;
    if (!DS.trials.length) {
      box.appendChild(el('p', null, 'No feasible design was found, so the front is empty; ' +
                                    'trials.csv lists the closest designs.'));
      return null;
    }
    var t = el('table', {id: 'pareto-table', 'class': 'sortable'});
    var head = el('tr');
    cols.forEach(function (c) {
      var th = el('th', {scope: 'col', 'data-kind': c.kind, 'aria-sort': 'none', 'data-key': c.key});
      th.appendChild(el('button', {type: 'button'}, c.label + unitText(c.unit)));
      head.appendChild(th);
    });
    var alt = cols.filter(function (c) { return c.alt_unit; });
    if (alt.length) {  // airflow in cfm on request
      var lab = el('label', {'class': 'hint', id: 'table-units'});
      var cb = el('input', {type: 'checkbox', id: 'table-alt-units'});
      lab.appendChild(cb);
      lab.appendChild(document.createTextNode(' airflow in ' + alt[0].alt_unit));
      box.appendChild(lab);
      cb.addEventListener('change', function () {
        alt.forEach(function (c) {
          var k = cols.indexOf(c), on = cb.checked;
          var th = t.querySelectorAll('thead th')[k];
          th.querySelector('button').textContent = c.label + unitText(on ? c.alt_unit : c.unit);
          t.querySelectorAll('tbody tr').forEach(function (tr) {
            var td = tr.children[k], raw = td.getAttribute('data-raw');
            var v = raw === '' ? null : Number(raw) * (on ? c.alt_scale : c.scale);
            td.setAttribute('data-v', v === null ? '' : String(v));
            td.textContent = fmt(v);
          });
        });
      });
    }
    var thead = el('thead');
    thead.appendChild(head);
    t.appendChild(thead);
    var body = el('tbody'), frag = document.createDocumentFragment();
    DS.trials.forEach(function (trial) {
      var tr = el('tr', {'data-trial': String(trial), tabindex: '0'});
      cols.forEach(function (c) {
        var raw = tableValue(trial, c.key);
        var v = raw !== null && c.scale ? raw * c.scale : raw;
        var td = el('td', {'data-v': v === null ? '' : String(v),
                           'data-raw': raw === null ? '' : String(raw)}, fmt(v));
        tr.appendChild(td);
      });
      frag.appendChild(tr);
    });
    body.appendChild(frag);
    t.appendChild(body);
    box.appendChild(t);
    return t;
  }

  function setupShortList() {
    var box = document.getElementById('shortlist-box');
    if (!box) { return; }
    var picks = D.shortlist || [];
    if (!picks.length) {
      box.appendChild(el('p', null, 'No feasible design: the short list is empty.'));
      return;
    }
    var rows = picks.map(function (p) {
      return [p.pick, p.trial, p.volume_cm3, p.mass_kg, p.fan || '–', p.fan_power_W,
              p.worst_margin_K, p.airflow_m3_h, p.reason];
    });
    var t = table(['pick', 'trial', 'sink volume [cm³]', 'mass [kg]', 'fan', 'fan power [W]',
                   'worst margin [K]', 'airflow [m³/h]', 'why'], rows, 'shortlist');
    t.id = 'shortlist-table';
    t.querySelectorAll('tbody tr').forEach(function (tr, k) {
      tr.setAttribute('data-trial', String(picks[k].trial));
      tr.setAttribute('tabindex', '0');
      tr.style.cursor = 'pointer';
      tr.addEventListener('click', function () { showDesign(picks[k].trial, true); });
    });
    box.appendChild(t);
  }

  function setupTable() {
    setupShortList();
    var t = buildTable();
    if (!t) { return; }
    var ths = t.querySelectorAll('thead th');
    ths.forEach(function (th, col) {
      th.querySelector('button').addEventListener('click', function () {
        var dir = th.getAttribute('aria-sort') === 'ascending' ? 'descending' : 'ascending';
        ths.forEach(function (o) { o.setAttribute('aria-sort', 'none'); });
        th.setAttribute('aria-sort', dir);
        var text = th.getAttribute('data-kind') === 'text';
        var body = t.tBodies[0];
        var rows = Array.prototype.slice.call(body.rows);
        rows.sort(function (a, b) {
          var va = a.cells[col].getAttribute('data-v'), vb = b.cells[col].getAttribute('data-v');
          if (va === '' && vb === '') { return 0; }
          if (va === '') { return 1; }
          if (vb === '') { return -1; }
          var r = text ? va.localeCompare(vb) : (parseFloat(va) - parseFloat(vb));
          return dir === 'ascending' ? r : -r;
        });
        rows.forEach(function (r) { body.appendChild(r); });
      });
    });
    Array.prototype.forEach.call(t.tBodies[0].rows, function (tr) {
      function open() { showDesign(Number(tr.getAttribute('data-trial')), true); }
      tr.addEventListener('click', open);
      tr.addEventListener('keydown', function (ev) { if (ev.key === 'Enter') { open(); } });
    });
  }

  /* ---------- parallel coordinates ---------- */
  /* Every trial with objective values; categorical variables as integer codes; colour
     0 infeasible, 1 feasible dominated, 2 Pareto. */
  function parcoordsFigure() {
    var keep = [];
    for (var i = 0; i < P.trial.length; i++) {
      var ok = OBJ.every(function (o) { return P.objectives[o.name][i] !== null; });
      if (ok) { keep.push(i); }
    }
    if (!keep.length || !D.parcoords.dimensions.length) { return null; }
    var dims = D.parcoords.dimensions.map(function (d) {
      var dim = {label: esc(d.label + unitText(d.unit))};
      if (d.from === 'categorical') {
        var labels = P.categorical[d.key];
        dim.values = keep.map(function (k) { return d.ticktext.indexOf(labels[k]); });
        dim.tickvals = d.ticktext.map(function (_, k) { return k; });
        dim.ticktext = d.ticktext.map(esc);
      } else {
        var col = d.from === 'objectives' ? P.objectives[d.key] : P.numeric[d.key];
        dim.values = keep.map(function (k) { return col[k]; });
      }
      return dim;
    });
    var codes = {infeasible: 0, feasible: 1, pareto: 2};
    var line = {color: keep.map(function (k) { return codes[P.status[k]]; }), cmin: 0, cmax: 2,
                showscale: false, colorscale: [[0, '#d5d8dc'], [0.5, '#9fb3c2'], [1, WARM]]};
    var trace = {type: 'parcoords', line: line, dimensions: dims, labelangle: -20,
                 labelside: 'bottom', labelfont: {size: 11}, tickfont: {size: 10},
                 rangefont: {size: 9}};
    return {data: [trace], layout: {font: FONT, paper_bgcolor: 'rgba(0,0,0,0)', height: 460,
                                    margin: {l: 150, r: 150, t: 40, b: 90}}};
  }

  function setupParcoords() {
    var box = document.getElementById('parcoords');
    var fig = parcoordsFigure();
    if (!fig) {
      box.appendChild(el('p', {'class': 'hint'}, 'No trials with objective values.'));
      return;
    }
    if (!HAVE_PLOTLY || !webgl()) {
      box.appendChild(el('p', {'class': 'hint'}, HAVE_PLOTLY ? NO_WEBGL : NO_PLOTLY + '.'));
      box.setAttribute('data-drawn', 'no');
      return;
    }
    Plotly.newPlot(box, fig.data, fig.layout, CONFIG).then(function () {
      box.setAttribute('data-drawn', 'yes');
    }, function (err) {
      box.replaceChildren(el('p', {'class': 'hint'}, 'Parallel coordinates unavailable in this browser (' + err + ').'));
    });
  }

  /* The figure and drawing builders, for scripts and tests (nothing here changes the page). */
  window.sinkoptReport = {sinkDrawing: sinkDrawing, designCurves: designCurves,
                          designDevices: designDevices, fanSystemFigure: fanSystemFigure,
                          breakdownFigure: breakdownFigure, parcoordsFigure: parcoordsFigure};

  /* ---------- start ---------- */
  plotlyReady = loadPlotly().then(function () {  // unpacked while the table is built
    HAVE_PLOTLY = true;
    plotlyState = 'ready';
  }, function (err) {
    plotlyState = 'failed';
    var box = document.getElementById('page-error');
    box.textContent = NO_PLOTLY + ' (' + (err && err.message ? err.message : err) + '). The tables, ' +
      'the design panel and the drawings still work.';
    box.hidden = false;
  });
  setupControls();
  /* ---------- the calibration: measured points, the model before and after ---------- */
  function setupCalibration() {
    var cal = (D.uncertainty || {}).calibration, box = document.getElementById('calibration-plot');
    if (!cal || !box || !HAVE_PLOTLY) { return; }
    var q = cal.flow_m3_s.map(function (v) { return v === null ? null : v * 3600; });
    var traces = [];
    [['pressure', 'pressure drop [Pa]', 'x', 'y'], ['thermal', 'thermal resistance [K/W]', 'x2', 'y2']]
      .forEach(function (kind) {
        var cols = cal[kind[0]];
        var keep = q.map(function (_, k) { return k; }).filter(function (k) { return cols[0][k] !== null; });
        if (!keep.length) { return; }
        keep.sort(function (a, b) { return q[a] - q[b]; });
        var pick = function (c) { return keep.map(function (k) { return c[k]; }); };
        var xs = pick(q);
        traces.push({type: 'scatter', mode: 'markers', x: xs, y: pick(cols[0]), xaxis: kind[2], yaxis: kind[3],
                     name: 'measured', legendgroup: 'm', showlegend: kind[0] === 'pressure',
                     marker: {color: '#1f2328', size: 8}});
        traces.push({type: 'scatter', mode: 'lines', x: xs, y: pick(cols[1]), xaxis: kind[2], yaxis: kind[3],
                     name: 'published correlations', legendgroup: 'b', showlegend: kind[0] === 'pressure',
                     line: {color: '#a3a8ae', dash: 'dash'}});
        traces.push({type: 'scatter', mode: 'lines', x: xs, y: pick(cols[2]), xaxis: kind[2], yaxis: kind[3],
                     name: 'calibrated', legendgroup: 'a', showlegend: kind[0] === 'pressure',
                     line: {color: '#1f77b4'}});
      });
    Plotly.newPlot(box, traces, baseLayout({height: 320, grid: {rows: 1, columns: 2, pattern: 'independent'},
      xaxis: axisStyle('flow [m³/h]'), yaxis: axisStyle('pressure drop [Pa]'),
      xaxis2: axisStyle('flow [m³/h]'), yaxis2: axisStyle('thermal resistance [K/W]')}), CONFIG);
  }

  setupTable();
  plotlyReady.then(setupCalibration).catch(function () {});
  plotlyReady.then(setupFront).then(function () {
    var m = /^#trial-(\d+)$/.exec(window.location.hash);
    if (m) { showDesign(Number(m[1]), true); }
  }).catch(function (err) {
    if (window.console) { console.error(err); }
  }).then(function () {
    document.body.setAttribute('data-ready-ms', String(Math.round(performance.now())));
    document.body.setAttribute('data-ready', 'yes');
    // The WebGL views come after the first paint (3-D) and when scrolled near (parallel
    // coordinates): with software rendering they take seconds.
    window.requestAnimationFrame(function () {
      window.setTimeout(function () {
        setup3d();
        document.body.setAttribute('data-webgl', webgl() ? 'yes' : 'no');
      }, 0);
    });
    var pc = document.getElementById('parcoords');
    if (window.IntersectionObserver) {
      var seen = new IntersectionObserver(function (entries) {
        if (entries.some(function (e) { return e.isIntersecting; })) {
          seen.disconnect();
          setupParcoords();
        }
      }, {rootMargin: '300px'});
      seen.observe(pc);
    } else {
      setupParcoords();
    }
  });
}());
