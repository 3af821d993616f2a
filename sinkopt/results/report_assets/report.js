/* sinkopt report page: Pareto plots, design panel, sortable table, parallel coordinates.
   Every text that comes from the study or fan files goes into the DOM with textContent, and
   into plotly (which reads a few HTML-like tags) through esc(). */
(function () {
  'use strict';

  var D = JSON.parse(document.getElementById('sinkopt-data').textContent);
  var F = JSON.parse(document.getElementById('sinkopt-figures').textContent);
  var CONFIG = {displaylogo: false, responsive: true, showSendToCloud: false,
                showEditInChartStudio: false, modeBarButtonsToRemove: ['select2d', 'lasso2d']};
  var PALETTE = ['#2f5d7c', '#c0662b', '#4f8a4c', '#7b4f8c', '#b89b2e', '#3a9a9c', '#a23f3f',
                 '#d48fb4', '#7fa7d4', '#8c6d3f', '#9fbf6f', '#5c5fb0'];
  var SCALE = [[0, '#24425c'], [0.35, '#5f8aa6'], [0.7, '#c9c8a0'], [1, '#d9963f']];
  var FONT = {family: "system-ui, -apple-system, 'Segoe UI', Roboto, Helvetica, Arial, sans-serif",
              size: 12, color: '#1f2328'};
  var P = D.pareto.points;
  var OBJ = D.pareto.objectives;
  var state = {x: null, y: null, z: null, colour: null, infeasible: true, logx: false,
               logy: false, selected: null, ready3d: false};

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
    if (c.fan) { lines.push('fan ' + esc(c.fan[i]) + (n.fan_speed ? ', speed setting ' + fmt(n.fan_speed[i], 3) : '')); }
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
    if (state.selected !== null) {
      var j = P.trial.indexOf(state.selected);
      if (j >= 0 && keys.every(function (k) { return axis(k).values[j] !== null; })) {
        traces.push(makeTrace([j], keys, is3d, {meta: 'selected', name: 'selected', group: 'selected',
          showlegend: false, marker: {symbol: 'circle-open', size: is3d ? 12 : 22,
          color: '#b5652b', line: {width: 3, color: '#b5652b'}}}));
        traces[traces.length - 1].hoverinfo = 'skip';
      }
    }
    return traces;
  }

  function axisLayout(id, log) {
    return {title: {text: esc(axis(id).title)}, type: log ? 'log' : 'linear', gridcolor: '#e3e5e8',
            zerolinecolor: '#c9ccd0', linecolor: '#9aa0a6', showline: true, mirror: true};
  }

  function draw2d() {
    var keys = [state.x, state.y];
    var layout = {font: FONT, height: 500, hovermode: 'closest', plot_bgcolor: '#fff',
                  paper_bgcolor: 'rgba(0,0,0,0)', margin: {l: 70, r: 20, t: 30, b: 60},
                  xaxis: axisLayout(state.x, state.logx), yaxis: axisLayout(state.y, state.logy),
                  legend: {orientation: 'h', y: -0.18, x: 0, font: {size: 11}},
                  title: {text: '2-D view', font: {size: 13}, x: 0.01}, uirevision: keys.join('|')};
    return Plotly.react('pareto2d', frontTraces(keys, false), layout, CONFIG);
  }

  function draw3d() {
    if (!has3d || !WEBGL || !state.ready3d) { return Promise.resolve(); }
    var keys = [state.x, state.y, state.z];
    function ax(id) {
      return {title: {text: esc(axis(id).title)}, gridcolor: '#dfe2e5', backgroundcolor: '#fbfbfa',
              showbackground: true};
    }
    var layout = {font: FONT, height: 500, paper_bgcolor: 'rgba(0,0,0,0)',
                  margin: {l: 0, r: 0, t: 30, b: 0}, showlegend: false,
                  title: {text: '3-D view', font: {size: 13}, x: 0.01},
                  scene: {xaxis: ax(state.x), yaxis: ax(state.y), zaxis: ax(state.z),
                          aspectmode: 'cube'}, uirevision: 'scene'};
    return Plotly.react('pareto3d', frontTraces(keys, true), layout, CONFIG);
  }

  var has3d = AXES.length >= 3 && OBJ.length >= 3;
  var WEBGL = (function () {
    try {
      var c = document.createElement('canvas');
      return !!(window.WebGLRenderingContext && (c.getContext('webgl') || c.getContext('experimental-webgl')));
    } catch (e) { return false; }
  }());
  var NO_WEBGL = 'This view needs WebGL, which is turned off or missing in this browser. ' +
                 'The 2-D view and the tables show the same designs.';

  function setupFront() {
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
    if (!P.trial.length) {
      document.getElementById('pareto2d').appendChild(el('p', {'class': 'hint'}, 'No trials to plot.'));
      return;
    }
    draw2d().then(function (gd) { gd.on('plotly_click', onPointClick); });
  }

  function setup3d() {
    if (!has3d || !P.trial.length) { return; }
    var box = document.getElementById('pareto3d');
    if (!WEBGL) {
      box.appendChild(el('p', {'class': 'hint'}, NO_WEBGL));
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

  /* ---------- design panel ---------- */
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

  var KEYS = [
    ['volume_cm3', 'sink volume', 'cm³', 1],
    ['mass_kg', 'sink mass', 'kg', 1],
    ['fan_power_W', 'fan electrical power', 'W', 1],
    ['noise_dBA', 'fan noise (estimate)', 'dB(A)', 1],
    ['airflow_m3_s', 'airflow', 'm³/h', 3600],
    ['pressure_drop_Pa', 'system pressure drop', 'Pa', 1],
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
    var i = P.trial.indexOf(trial);
    var h = el('div', {'class': 'dhead'});
    h.appendChild(el('h3', {id: 'design-title'}, 'Trial ' + trial));
    var st = i < 0 ? 'unknown' : P.status[i];
    h.appendChild(el('span', {'class': 'badge ' + (st === 'infeasible' ? 'bad' : 'ok')},
                     st === 'infeasible' ? 'infeasible' : 'feasible, not on the front'));
    panel.appendChild(h);
    panel.appendChild(el('p', {'class': 'note'}, 'This trial is not a Pareto design, so the report ' +
      'keeps only its summary (' + (i >= 0 && P.exact[i] ? 'exact series' : 'search model') +
      '). Run sinkopt evaluate with its values from trials.csv for the full detail.'));
    if (i < 0) { return; }
    var keys = el('div', {'class': 'keys'});
    [['volume_cm3', 'sink volume', 'cm³', 1], ['fan_power_W', 'fan electrical power', 'W', 1],
     ['worst_margin_K', 'worst junction margin', 'K', 1], ['airflow_m3_s', 'airflow', 'm³/h', 3600]]
      .forEach(function (k) {
        var v = P.numeric[k[0]] ? P.numeric[k[0]][i] : null;
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
    var d = D.designs[String(trial)];
    if (!d) {
      showOther(panel, trial);
    } else {
      renderDesign(panel, d);
    }
    if (scroll) { document.getElementById('design').scrollIntoView({block: 'start'}); }
    if (history.replaceState) { history.replaceState(null, '', '#trial-' + trial); }
  }

  function renderDesign(panel, d) {
    var head = el('div', {'class': 'dhead'});
    head.appendChild(el('h3', {id: 'design-title'}, 'Trial ' + d.trial));
    if (d.fan) { head.appendChild(el('span', {'class': 'fan'}, 'fan: ' + d.fan)); }
    head.appendChild(el('span', {'class': 'badge ' + (d.feasible ? 'ok' : 'bad')},
                        d.feasible ? 'meets every constraint' : 'violates a constraint'));
    head.appendChild(el('span', {'class': 'note'}, 'exact spreading series'));
    panel.appendChild(head);

    panel.appendChild(el('h4', null, 'Geometry'));
    var dims = el('div', {'class': 'keys'});
    DIMS.forEach(function (k) { dims.appendChild(keyBox(k[0], k[1], d.params[k[0]], k[2])); });
    panel.appendChild(dims);

    panel.appendChild(el('h4', null, 'Results'));
    var keys = el('div', {'class': 'keys'});
    KEYS.forEach(function (k) {
      var v = d.key[k[0]];
      if (k[0] === 'noise_dBA' && v === null) { return; }
      if (k[0] === 'speed_ratio' && v === null) { return; }
      if (!d.fan && (k[0] === 'fan_power_W' || k[0] === 'noise_dBA')) { return; }
      keys.appendChild(keyBox(k[0], k[1], v === null ? null : v * k[3], k[2]));
    });
    panel.appendChild(keys);
    panel.appendChild(el('p', {'class': 'note'},
      'Air: in at ' + fmt(d.ambient_C) + ' °C, out at ' + fmt(d.key.air_outlet_C) + ' °C (mixed mean), rise ' +
      fmt(d.key.air_rise_K, 3) + ' K; site air density ' + fmt(d.key.air_density_kg_m3, 3) + ' kg/m³.'));

    panel.appendChild(el('h4', null, 'Drawings (to scale, mm)'));
    var drawings = el('div', {'class': 'drawings'});
    var f1 = el('figure');
    f1.appendChild(el('figcaption', null, 'Front view, looking along the flow'));
    f1.appendChild(drawSvg(d.drawing.front, 'front view of trial ' + d.trial));
    var f2 = el('figure');
    f2.appendChild(el('figcaption', null, 'Plan view from the fin side, air entering at the bottom'));
    f2.appendChild(drawSvg(d.drawing.plan, 'plan view of trial ' + d.trial));
    drawings.appendChild(f1);
    drawings.appendChild(f2);
    panel.appendChild(drawings);

    var grid = el('div', {'class': 'grid2'});
    var c1 = el('figure');
    c1.appendChild(el('figcaption', null, d.curves.fan_curve ?
      'Fans against the system, at the site air density' + (d.curves.name ? ' (' + d.curves.name +
        (d.curves.count > 1 ? ', ' + d.curves.count + ' in ' + d.curves.arrangement : '') + ')' : '') :
      'System curve and the given airflow, at the site air density'));
    var fs = el('div', {id: 'fan-system', 'class': 'plot'});
    c1.appendChild(fs);
    var c2 = el('figure');
    c2.appendChild(el('figcaption', null, 'Temperature rise from the inlet air to each junction'));
    var bd = el('div', {id: 'breakdown', 'class': 'plot'});
    c2.appendChild(bd);
    grid.appendChild(c1);
    grid.appendChild(c2);
    panel.appendChild(grid);
    var figs = F.designs[String(d.trial)];
    if (figs) {
      Plotly.newPlot(fs, figs.fan_system.data, figs.fan_system.layout, CONFIG);
      Plotly.newPlot(bd, figs.breakdown.data, figs.breakdown.layout, CONFIG);
    }

    panel.appendChild(el('h4', null, 'Devices'));
    var rows = d.devices.map(function (dv) {
      var b = dv.breakdown_K || {};
      return [dv.name, dv.power_W, dv.mounting, dv.junction_C, dv.tj_max_C, dv.margin_K,
              b.air_heating_upstream, b.sink_and_spreading, b.mounting_stack, b.junction_to_case];
    });
    var dt = table(['device', 'power [W]', 'mounting', 'Tj [°C]', 'Tj,max [°C]', 'margin [K]',
                    'upstream air [K]', 'sink + spreading [K]', 'mounting [K]', 'junction–case [K]'],
                   rows, 'devices');
    dt.id = 'design-devices';
    dt.querySelectorAll('tbody tr').forEach(function (tr, k) {
      var m = d.devices[k].margin_K;
      if (m !== null && m < 0) { tr.children[5].classList.add('neg'); }
    });
    var wrap = el('div', {'class': 'scroll'});
    wrap.appendChild(dt);
    panel.appendChild(wrap);

    panel.appendChild(el('h4', null, 'Warnings'));
    if (d.warnings.length) {
      var ul = el('ul', {'class': 'warnings'});
      d.warnings.forEach(function (w) { ul.appendChild(el('li', null, w)); });
      panel.appendChild(ul);
    } else {
      panel.appendChild(el('p', {'class': 'note'}, 'None: every correlation within its range, no stall.'));
    }
    if (d.spreading_check) {
      var sc = d.spreading_check;
      var parts = Object.keys(sc.junction_difference_K).map(function (k) {
        var v = sc.junction_difference_K[k];
        return k + ' ' + (v === null ? '–' : (v >= 0 ? '+' : '') + fmt(v, 2)) + ' K';
      });
      panel.appendChild(el('p', {'class': 'note', id: 'spreading-check'},
        'Spreading check: junction temperatures with the exact series minus the search model (' +
        sc.search_model + '): largest ' + fmt(sc.max_abs_K, 2) + ' K (' + parts.join(', ') + ').'));
    }

    panel.appendChild(el('h4', null, 'Reproduce this design'));
    var cmd = el('div', {'class': 'cmd'});
    var pre = el('pre', {id: 'evaluate-command'}, d.evaluate_command);
    var btn = el('button', {type: 'button', 'class': 'copy'}, 'Copy command');
    var note = el('span', {'class': 'copied', 'aria-live': 'polite'});
    btn.addEventListener('click', function () { copyText(d.evaluate_command, note); });
    cmd.appendChild(pre);
    cmd.appendChild(btn);
    cmd.appendChild(note);
    panel.appendChild(cmd);
  }

  /* ---------- sortable table ---------- */
  function setupTable() {
    var t = document.getElementById('pareto-table');
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
  function setupParcoords() {
    var box = document.getElementById('parcoords');
    if (!F.parcoords) {
      box.appendChild(el('p', {'class': 'hint'}, 'No trials with objective values.'));
      return;
    }
    if (!WEBGL) {
      box.appendChild(el('p', {'class': 'hint'}, NO_WEBGL));
      box.setAttribute('data-drawn', 'no');
      return;
    }
    Plotly.newPlot(box, F.parcoords.data, F.parcoords.layout, CONFIG).then(function () {
      box.setAttribute('data-drawn', 'yes');
    }, function (err) {
      box.replaceChildren(el('p', {'class': 'hint'}, 'Parallel coordinates unavailable in this browser (' + err + ').'));
    });
  }

  setupFront();
  setupTable();
  var m = /^#trial-(\d+)$/.exec(window.location.hash);
  if (m) { showDesign(Number(m[1]), true); }
  document.body.setAttribute('data-ready', 'yes');
  // The WebGL views come after the first paint (3-D) and when scrolled near (parallel
  // coordinates): with software rendering they take seconds.
  window.requestAnimationFrame(function () {
    window.setTimeout(function () {
      setup3d();
      document.body.setAttribute('data-webgl', WEBGL ? 'yes' : 'no');
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
}());
