/* oddswatch replay report: builds the page from the data island with Chart.js. */
(function () {
  'use strict';
  var data = JSON.parse(document.getElementById('oddswatch-data').textContent);
  var C = {
    ink: '#22313b', muted: '#5d6b75', grid: '#ebe6dc', teal: '#2b7a78', tealBand: 'rgba(43,122,120,0.16)',
    ochre: '#a86b16', ochreBand: 'rgba(168,107,22,0.14)', rust: '#b4532a', moss: '#55773a', amber: '#d4961c',
    slate: '#6f7c86', wine: '#9b2f45', plum: '#7b4b7e'
  };
  var STRATA = ['#2b7a78', '#7b4b7e', '#a86b16', '#3f6ea5', '#55773a', '#9b2f45', '#5d6b75'];
  var REJECTS = ['#b7798a', '#a99f8b', '#9a86b3', '#8aa2c2', '#a3b08a', '#c49a7a', '#8f979d'];
  var MARK = {
    raised: { color: C.rust, style: 'triangle', radius: 10, label: 'raised' },
    continuing: { color: C.amber, style: 'circle', radius: 6, label: 'continuing' },
    cleared: { color: C.moss, style: 'rectRot', radius: 7, label: 'cleared' }
  };

  var F = window.oddswatchPage, el = F.el, day = F.day, when = F.when, num = F.num, pct = F.pct;
  function count(v) { return v === null || v === undefined ? 'withheld' : v.toLocaleString('en'); }
  function points(xs, ys) {
    var out = [];
    for (var i = 0; i < xs.length; i++) { out.push({ x: xs[i], y: ys && ys[i] !== undefined ? ys[i] : null }); }
    return out;
  }

  function series(label, role, xs, ys, color, extra) {
    var d = { label: label, role: role, data: points(xs, ys), borderColor: color, backgroundColor: color,
      borderWidth: 2, pointRadius: xs.length > 60 ? 0 : 2, pointHoverRadius: 4, spanGaps: false, fill: false, tension: 0 };
    return Object.assign(d, extra || {});
  }
  function band(label, xs, lo, hi, fillColor) {
    var edge = { borderWidth: 0, pointRadius: 0, pointHoverRadius: 0, borderColor: 'transparent', order: 3 };
    return [
      series(label + ' lower', 'edge', xs, lo, fillColor, edge),
      series(label, 'band', xs, hi, fillColor, Object.assign({}, edge, { fill: '-1', backgroundColor: fillColor }))
    ];
  }
  function hline(label, role, x0, x1, value, color, dash) {
    return { label: label, role: role, data: [{ x: x0, y: value }, { x: x1, y: value }], borderColor: color,
      backgroundColor: color, borderWidth: 1.5, borderDash: dash || [], pointRadius: 0, pointHoverRadius: 0, fill: false };
  }
  /** One dotted line per limit; the legend names them all once. */
  function limitLines(values, span) {
    var label = (values && values.length > 1 ? 'limits ' : 'limit ') + (values || []).map(num).join(' and ');
    return (values || []).map(function (v, j) {
      return hline(label, j === 0 ? 'limit' : 'limit-more', span[0], span[1], v, C.wine, [3, 3]);
    });
  }
  function markers(stream, key) {
    var sets = [];
    ['raised', 'continuing', 'cleared'].forEach(function (state) {
      var m = MARK[state];
      var pts = stream.markers.filter(function (k) { return k.chart === key && k.state === state; })
        .map(function (k) { return { x: k.x, y: k.y === undefined ? null : k.y, row: k.row }; });
      var ring = state === 'continuing';
      sets.push({ label: 'alert ' + m.label, role: 'marker-' + state, data: pts, showLine: false, order: -1,
        pointStyle: m.style, pointRadius: m.radius, pointHoverRadius: m.radius + 2, pointBorderWidth: ring ? 2.5 : 1.5,
        borderColor: ring ? m.color : '#ffffff', backgroundColor: ring ? '#ffffff' : m.color });
    });
    return sets;
  }
  function range(xs) {
    var lo = Infinity, hi = -Infinity;
    xs.forEach(function (x) { if (x < lo) { lo = x; } if (x > hi) { hi = x; } });
    return [lo, hi];
  }

  function xAxis(ends) {
    return {
      type: 'linear', grid: { color: C.grid },
      ticks: { color: C.muted, maxRotation: 0, autoSkip: false, callback: function (v) { return day(v); } },
      afterBuildTicks: function (scale) {
        var inside = ends.filter(function (x) { return x >= scale.min && x <= scale.max; });
        if (inside.length === 0) { return; }
        var every = Math.max(1, Math.ceil(inside.length / Math.max(2, Math.floor(scale.width / 100))));
        var ticks = [];
        for (var i = inside.length - 1; i >= 0; i -= every) { ticks.unshift({ value: inside[i] }); }
        scale.ticks = ticks;
      }
    };
  }
  function logAxis(title) {
    return {
      type: 'logarithmic', title: { display: true, text: title, color: C.muted }, grid: { color: C.grid },
      ticks: { color: C.muted, callback: function (v) { return num(v).replace(/\.?0+$/, ''); } },
      afterBuildTicks: F.powersOfTwo
    };
  }

  var registry = [];
  function chart(grid, streamIndex, key, title, sub, datasets, scales, ends, after) {
    var wrap = el('figure', 'chart');
    wrap.setAttribute('data-stream', streamIndex);
    wrap.setAttribute('data-chart', key);
    wrap.style.margin = '0';
    wrap.appendChild(el('h3', null, title));
    if (sub) { wrap.appendChild(el('p', 'sub', sub)); }
    var box = el('div', 'box');
    var canvas = document.createElement('canvas');
    canvas.setAttribute('role', 'img');
    canvas.setAttribute('aria-label', title);
    box.appendChild(canvas);
    wrap.appendChild(box);
    if (after) { wrap.appendChild(after); }
    grid.appendChild(wrap);
    scales.x = xAxis(ends);
    var c = new Chart(canvas, {
      type: 'line',
      data: { datasets: datasets },
      options: {
        parsing: true, normalized: true, interaction: { mode: 'nearest', intersect: true },
        scales: scales,
        plugins: {
          legend: { position: 'bottom', labels: { boxWidth: 12, boxHeight: 8, usePointStyle: true,
            sort: function (a, b) { return a.datasetIndex - b.datasetIndex; },
            filter: function (item, d) {
              var ds = d.datasets[item.datasetIndex];
              return ds.role !== 'edge' && ds.role !== 'stratum-band' && ds.role !== 'limit-more'
                && !(ds.role.indexOf('marker') === 0 && ds.data.length === 0);
            } } },
          tooltip: { callbacks: {
            title: function (items) { return items.length ? 'window ending ' + when(items[0].parsed.x) : ''; },
            label: function (item) {
              var ds = item.dataset;
              if (ds.role.indexOf('marker') === 0) {
                var a = data.alerts[ds.data[item.dataIndex].row];
                return a.state + ' · ' + a.rule + ' · ' + a.measure + ' ' + num(a.value)
                  + (a.observed !== undefined && a.observed !== a.value ? ' (observed ' + num(a.observed) + ')' : '');
              }
              return ds.label + ': ' + (ds.percent ? pct(item.parsed.y) : num(item.parsed.y));
            } } }
        }
      }
    });
    registry.push({ stream: streamIndex, chart: key, canvas: canvas });
    return c;
  }

  function prevalenceCharts(grid, s, i) {
    var xs = s.end, p = s.prevalence;
    var percent = { ticks: { callback: function (v) { return Number((100 * v).toPrecision(3)) + ' %'; } } };
    var sets = band('interval' + (p.method ? ' (' + p.method + ')' : ''), xs, p.lo, p.hi, C.tealBand)
      .concat([series('prevalence', 'value', xs, p.v, C.teal, { percent: true })]);
    sets.forEach(function (d) { d.percent = true; });
    chart(grid, i, 'prevalence', 'Prevalence', 'Share of positives per window, with its interval.',
      sets, { y: Object.assign({ beginAtZero: true, grid: { color: C.grid } }, percent) }, xs);
    if (s.strata.length) {
      var st = [];
      s.strata.forEach(function (k, j) {
        var col = STRATA[j % STRATA.length];
        var level = k.label.slice(k.label.indexOf('=') + 1);
        band(level + ' interval', xs, k.lo, k.hi, col + '14').forEach(function (d) {
          d.role = d.role === 'band' ? 'stratum-band' : 'edge'; d.percent = true; st.push(d);
        });
        st.push(series(level, 'stratum', xs, k.v, col, { percent: true, borderWidth: 1.75 }));
      });
      var term = s.strata[0].label.slice(0, s.strata[0].label.indexOf('='));
      chart(grid, i, 'strata', 'Prevalence by ' + term, 'Per level, with its interval (shaded); withheld strata are gaps.',
        st, { y: Object.assign({ beginAtZero: true, grid: { color: C.grid } }, percent) }, xs);
    }
  }

  function oddsRatioCharts(grid, s, i) {
    var xs = s.end, span = range(xs);
    s.terms.forEach(function (t) {
      var lines = s.lines[t.key] || {};
      var sets = band('Wald interval', xs, t.lo, t.hi, C.tealBand);
      if (t.plo) {
        sets.push(series('profile interval', 'profile', xs, t.plo, C.ochre, { borderDash: [5, 3], borderWidth: 1.5, pointRadius: 0 }));
        sets.push(series('profile interval upper', 'edge', xs, t.phi, C.ochre, { borderDash: [5, 3], borderWidth: 1.5, pointRadius: 0 }));
      }
      sets.push(series('odds ratio', 'value', xs, t.v, C.teal));
      sets.push(hline('no association (1)', 'reference', span[0], span[1], 1, '#b9b2a5', [2, 3]));
      if (lines.baseline !== undefined) {
        sets.push(hline('baseline ' + num(lines.baseline), 'baseline', span[0], span[1], lines.baseline, C.slate, [7, 4]));
      }
      sets = sets.concat(limitLines(lines.limits, span), markers(s, t.key));
      var sub = 'Against ' + (t.reference ? 'level ' + t.reference : 'a one-unit step' + (t.per ? ' of ' + t.per : ''))
        + '; logarithmic scale. ' + (lines.baseline === undefined ? 'No drift alert carries the baseline value here. ' : '')
        + (lines.note || '');
      chart(grid, i, t.key, 'Odds ratio: ' + t.label, sub, sets, { y: logAxis('odds ratio') }, xs);
    });
  }

  function calibrationCharts(grid, s, i) {
    var c = s.calibration, xs = s.end, span = range(xs);
    if (!c) { return; }
    [['oe', 'Calibration: observed / expected', c.oe, c.oeLo, c.oeHi, 'O/E', 'interval (Poisson on O)'],
     ['slope', 'Calibration slope', c.slope, c.slopeLo, c.slopeHi, 'slope', 'slope ± 1.96 se']].forEach(function (k) {
      var lines = s.lines[k[0]] || {};
      var sets = band(k[6], xs, k[3], k[4], C.tealBand)
        .concat([series(k[5], 'value', xs, k[2], C.teal), hline('perfect (1)', 'reference', span[0], span[1], 1, '#b9b2a5', [2, 3])]);
      sets = sets.concat(limitLines(lines.limits, span), markers(s, k[0]));
      chart(grid, i, k[0], k[1], 'Of the frozen baseline model on each window, with the limits of the calibration rule.',
        sets, { y: { grid: { color: C.grid } } }, xs);
    });
  }

  function cusumCharts(grid, s, i) {
    s.cusum.forEach(function (p) {
      var span = range(p.x.concat(s.end));
      var sets = [series('CUSUM', 'value', p.x, p.y, C.plum, { pointRadius: 2 })];
      if (p.max) { sets.push(series('maximum in window', 'max', p.x, p.max, C.plum, { borderDash: [4, 3], borderWidth: 1 })); }
      if (p.limit !== undefined) { sets.push(hline('limit h ' + num(p.limit), 'limit', span[0], span[1], p.limit, C.wine, [3, 3])); }
      sets = sets.concat(markers(s, p.key));
      var sub = p.source === 'estimates' ? 'Value at each window end, with its limit.'
        : 'From the alerts only: each signal climbs from 0 at the start of its excursion to its value, then the chart restarts at 0. '
          + 'The estimates of this replay carry no CUSUM values, so the path between alerts is not shown.';
      chart(grid, i, p.key, 'CUSUM ' + p.rule.replace('bernoulli-cusum-', '') + ': ' + p.subject, sub, sets,
        { y: { beginAtZero: true, grid: { color: C.grid } } }, s.end);
    });
  }

  function volumeChart(grid, s, i) {
    var xs = s.end;
    var sets = [series('events', 'events', xs, s.events, C.teal), series('positives', 'positives', xs, s.positives, C.ochre)];
    s.rejects.byReason.forEach(function (r, j) {
      var col = REJECTS[j % REJECTS.length];
      sets.push({ type: 'bar', order: 4, label: 'rejected: ' + r.reason, role: 'rejects', data: points(xs, r.n), yAxisID: 'r',
        stack: 'rejects', backgroundColor: col, borderColor: col, borderWidth: 0, barPercentage: 0.7, categoryPercentage: 0.9 });
    });
    var extra = [];
    Object.keys(s.rejects.afterLastWindow || {}).forEach(function (k) { extra.push(k + ' ' + s.rejects.afterLastWindow[k] + ' after the last window'); });
    Object.keys(s.rejects.timeUnknown || {}).forEach(function (k) { extra.push(k + ' ' + s.rejects.timeUnknown[k] + ' with no readable time'); });
    var after = extra.length ? el('p', 'sub', 'Rejected, not charted: ' + extra.join('; ') + '.') : null;
    var scales = { y: { beginAtZero: true, title: { display: true, text: 'events per window', color: C.muted }, grid: { color: C.grid } } };
    if (s.rejects.byReason.length) {
      scales.r = { position: 'right', beginAtZero: true, stacked: true, title: { display: true, text: 'rejected per step', color: C.muted }, grid: { display: false } };
    }
    chart(grid, i, 'volume', 'Events, positives and rejects',
      'Events and positives per window; rejected and late records by reason, per step ending at the window end.', sets, scales, xs, after);
  }

  function notes(section, s) {
    if (!s.notes.length) { return; }
    var dl = el('dl', 'notes');
    section.appendChild(el('h3', 'notes-title', 'Fit notes: windows whose fit state is not "converged"'));
    s.notes.forEach(function (n) {
      dl.appendChild(el('dt', null, 'window ending ' + when(n.end) + ': ' + n.state + (n.method ? ' (' + n.method + ')' : '')));
      dl.appendChild(el('dd', null, n.text || 'No note.'));
    });
    section.appendChild(dl);
  }

  function streamSection(container, s, i) {
    var section = el('section', 'stream');
    container.appendChild(section);
    section.id = 'stream-' + i;
    section.setAttribute('data-name', s.name);
    var head = el('header');
    head.appendChild(el('h2', null, s.name));
    var alerts = s.markers.length;
    var facts = s.end.length ? s.end.length + ' final windows, ending ' + day(s.end[0]) + ' to ' + day(s.end[s.end.length - 1])
      : 'no final windows';
    facts += ' · ' + (alerts ? alerts + ' alert message' + (alerts > 1 ? 's' : '') : 'no alerts');
    if (s.withheldWindows) { facts += ' · ' + s.withheldWindows + ' window(s) with withheld small counts'; }
    if (s.lines.cusumNote) { facts += ' · ' + s.lines.cusumNote; }
    head.appendChild(el('span', 'sub', facts));
    section.appendChild(head);
    var grid = el('div', 'grid');
    section.appendChild(grid);
    if (s.end.length) {
      prevalenceCharts(grid, s, i);
      oddsRatioCharts(grid, s, i);
      calibrationCharts(grid, s, i);
    }
    cusumCharts(grid, s, i);
    if (s.end.length) { volumeChart(grid, s, i); }
    notes(section, s);
  }

  function go(row) {
    var a = data.alerts[row];
    var filter = document.getElementById('filter');
    if (document.getElementById('stream-' + a.stream).classList.contains('hidden')) { filter.value = ''; applyFilter(); }
    var target = document.querySelector('.chart[data-stream="' + a.stream + '"][data-chart="' + CSS.escape(a.chart) + '"]');
    if (!target) { target = document.getElementById('stream-' + a.stream); }
    target.scrollIntoView({ behavior: 'auto', block: 'center' });
    target.classList.remove('flash');
    void target.offsetWidth;
    target.classList.add('flash');
    setTimeout(function () { target.classList.remove('flash'); }, 2500);
    var canvas = target.querySelector('canvas');
    var c = canvas && Chart.getChart(canvas);
    if (c) {
      c.data.datasets.forEach(function (ds, di) {
        if (ds.role.indexOf('marker') !== 0) { return; }
        ds.data.forEach(function (p, pi) {
          if (p.row === row) { c.setActiveElements([{ datasetIndex: di, index: pi }]); c.tooltip.setActiveElements([{ datasetIndex: di, index: pi }]); c.update(); }
        });
      });
    }
  }

  function alertTable() {
    var box = document.getElementById('alert-table');
    if (!data.alerts.length) { box.appendChild(el('p', 'empty', 'No alerts in this replay.')); return; }
    var byState = { raised: 0, continuing: 0, cleared: 0 };
    data.alerts.forEach(function (a) { byState[a.state] = (byState[a.state] || 0) + 1; });
    box.parentNode.insertBefore(el('p', 'sub', data.alerts.length + ' alert messages: ' + byState.raised + ' raised, '
      + byState.continuing + ' continuing, ' + byState.cleared + ' cleared.'), box);
    var table = el('table');
    var head = el('tr');
    ['Stream', 'Rule', 'State', 'Measure', 'Observed', 'Limit', 'Window', 'Replay command'].forEach(function (h) { head.appendChild(el('th', null, h)); });
    table.appendChild(el('thead')).appendChild(head);
    var body = el('tbody');
    data.alerts.forEach(function (a, r) {
      var tr = el('tr');
      tr.tabIndex = 0;
      tr.setAttribute('data-stream', a.stream);
      tr.setAttribute('data-row', r);
      tr.appendChild(el('td', null, data.streams[a.stream].name));
      tr.appendChild(el('td', null, a.rule + (a.subject && a.subject !== 'calibration' ? ' · ' + a.subject : '')));
      var st = el('td');
      st.appendChild(el('span', 'state state-' + a.state, a.state));
      tr.appendChild(st);
      tr.appendChild(el('td', null, a.measure));
      tr.appendChild(el('td', 'num', num(a.value)));
      tr.appendChild(el('td', 'num', num(a.limit)));
      tr.appendChild(el('td', 'when', when(Date.parse(a.start)) + ' to ' + when(Date.parse(a.end))));
      var cmd = el('td', 'cmd');
      cmd.appendChild(el('code', null, a.command));
      tr.appendChild(cmd);
      tr.addEventListener('click', function (ev) { if (!window.getSelection().toString()) { go(r); } });
      tr.addEventListener('keydown', function (ev) { if (ev.key === 'Enter') { go(r); } });
      body.appendChild(tr);
    });
    table.appendChild(body);
    box.appendChild(table);
  }

  function otherRejects() {
    var keys = Object.keys(data.otherRejects || {});
    if (!keys.length) { return; }
    document.getElementById('other-rejects').appendChild(el('p', 'sub', 'Rejected records not counted on a stream shown here (no stream could be chosen, or theirs has no final window): '
      + keys.map(function (k) { return k + ' ' + data.otherRejects[k]; }).join('; ') + '.'));
  }

  function applyFilter() {
    var q = document.getElementById('filter').value.trim().toLowerCase();
    data.streams.forEach(function (s, i) {
      var show = !q || s.name.toLowerCase().indexOf(q) >= 0;
      document.getElementById('stream-' + i).classList.toggle('hidden', !show);
      document.getElementById('chip-' + i).classList.toggle('hidden', !show);
      document.querySelectorAll('tr[data-stream="' + i + '"]').forEach(function (tr) { tr.classList.toggle('hidden', !show); });
    });
  }

  function streamList() {
    var list = document.getElementById('stream-list');
    data.streams.forEach(function (s, i) {
      var li = el('li');
      li.id = 'chip-' + i;
      var b = el('button', null, s.name);
      b.type = 'button';
      var raised = s.markers.filter(function (m) { return m.state === 'raised'; }).length;
      if (raised) { b.appendChild(el('span', 'count', raised + ' raised')); }
      b.addEventListener('click', function () { document.getElementById('stream-' + i).scrollIntoView({ block: 'start' }); });
      li.appendChild(b);
      list.appendChild(li);
    });
    document.getElementById('filter').addEventListener('input', applyFilter);
    document.getElementById('filter').addEventListener('search', applyFilter);
  }

  var container = document.getElementById('streams');
  if (!data.streams.length) { container.appendChild(el('p', 'empty', 'No final windows and no alerts in this replay.')); }
  data.streams.forEach(function (s, i) { streamSection(container, s, i); });
  alertTable();
  otherRejects();
  streamList();
  window.oddswatchReport = { charts: registry };
  document.body.setAttribute('data-ready', 'true');
}());
