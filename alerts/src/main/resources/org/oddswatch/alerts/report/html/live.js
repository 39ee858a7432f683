/* oddswatch live page: reads this service's API every few seconds and updates the document in place. */
(function () {
  'use strict';
  var C = {
    ink: '#22313b', muted: '#5d6b75', grid: '#ebe6dc', teal: '#2b7a78', tealBand: 'rgba(43,122,120,0.16)',
    ochre: '#a86b16', ochreBand: 'rgba(168,107,22,0.14)', rust: '#b4532a', moss: '#55773a', amber: '#d4961c',
    slate: '#6f7c86', wine: '#9b2f45', plum: '#7b4b7e', plumBand: 'rgba(123,75,126,0.14)'
  };
  var CUSUM = ['#3f6ea5', '#7b4b7e', '#a86b16', '#55773a'];
  var MARK = {
    raised: { color: C.rust, style: 'triangle', radius: 10 },
    continuing: { color: C.amber, style: 'circle', radius: 6 },
    cleared: { color: C.moss, style: 'rectRot', radius: 7 }
  };
  var params = new URLSearchParams(location.search);
  var EVERY = Math.max(1, Number(params.get('every')) || 5) * 1000;
  var LAST = 60;
  var CHARTED = 4;
  /** Episodes listed with an incident before the rest fold away. */
  var SHOWN_EPISODES = 4;
  var state = { streams: [], alerts: { open: [], recent: [], incidents: { open: [], recent: [] } }, selected: null, focus: null, filter: '', refreshes: 0, expanded: {} };
  var charts = {};

  var F = window.oddswatchPage, el = F.el, day = F.day, when = F.when, num = F.num, pct = F.pct;
  function ms(iso) { return iso ? Date.parse(iso) : null; }
  function count(v) { return v === null || v === undefined ? 'withheld' : Number(v).toLocaleString('en'); }
  function withheld(e, field) {
    var w = (e && e.withheld) || [];
    for (var i = 0; i < w.length; i++) { if (w[i].field === field) { return w[i].reason; } }
    return null;
  }
  function subjectName(s) { return s ? s.term + (s.level !== null && s.level !== undefined ? '=' + s.level : '') : ''; }
  function table(headers, rows, numeric) {
    var t = el('table'), head = el('thead'), tr = el('tr');
    headers.forEach(function (h, i) { var th = el('th', numeric && numeric[i] ? 'num' : null, h); th.scope = 'col'; tr.appendChild(th); });
    head.appendChild(tr);
    t.appendChild(head);
    var body = el('tbody');
    rows.forEach(function (r) { body.appendChild(r); });
    t.appendChild(body);
    return t;
  }
  function cell(tr, text, cls) { var td = el('td', cls || null, text); tr.appendChild(td); return td; }
  /** Puts {@code node} in the element {@code id}, unless what is there is equal (keeps scroll and focus). */
  function replace(id, node) {
    var host = document.getElementById(id);
    if (node && host.childNodes.length === 1 && host.firstChild.isEqualNode(node)) { return; }
    host.textContent = '';
    if (node) { host.appendChild(node); }
  }

  function watched(e) {
    var ratios = (e.coefficients || []).filter(function (c) { return c.oddsRatio !== null && c.oddsRatio !== undefined; });
    var w = ratios.filter(function (c) { return c.lrP != null || c.profileLower != null || c.profileUpper != null; });
    return w.length ? w : ratios;
  }
  function drift(e, c) {
    var d = (e.drift || []).filter(function (v) { return v.subject.term === c.term && (v.subject.level || null) === (c.level || null); });
    return d.length ? d[0].z : null;
  }
  function interval(lo, hi) { return lo == null || hi == null ? '' : ' (' + num(lo) + ' to ' + num(hi) + ')'; }

  function getJson(url) {
    return fetch(url, { headers: { Accept: 'application/json' }, cache: 'no-store' }).then(function (r) {
      if (!r.ok) { throw new Error(url + ' answered ' + r.status); }
      return r.json();
    });
  }

  /* ---------- service, records and partitions ---------- */
  function drawService(service) {
    var host = el('div', 'service');
    var ready = service.state === 'ready';
    host.appendChild(el('span', 'pill' + (ready ? '' : service.state === 'rebuilding' || service.state === 'starting' ? ' warn' : ' bad'), service.state));
    if (service.reason) { host.appendChild(el('span', null, service.reason)); }
    var c = service.counts || { consumed: 0, outcomes: {} };
    host.appendChild(el('span', null, count(c.consumed) + ' records consumed: ' + Object.keys(c.outcomes || {}).map(function (k) {
      return count(c.outcomes[k]) + ' ' + k; }).join(', ')));
    var parts = service.partitions || [];
    var rebuilding = parts.filter(function (p) { return p.rebuilding; }).length;
    host.appendChild(el('span', null, parts.length + ' partition' + (parts.length === 1 ? '' : 's') + (rebuilding ? ', ' + rebuilding + ' rebuilding' : ', all live')));
    var old = document.getElementById('service');
    old.textContent = '';
    Array.from(host.childNodes).forEach(function (n) { old.appendChild(n); });

    var rows = [];
    Object.keys(c.outcomes || {}).forEach(function (k) { var tr = el('tr'); cell(tr, 'outcome'); cell(tr, k); cell(tr, count(c.outcomes[k]), 'num'); rows.push(tr); });
    Object.keys(c.reasons || {}).forEach(function (k) { var tr = el('tr'); cell(tr, 'reason'); cell(tr, k); cell(tr, count(c.reasons[k]), 'num'); rows.push(tr); });
    var wrap = el('div');
    wrap.appendChild(el('h3', null, 'Records by outcome and reason'));
    wrap.appendChild(table(['kind', 'outcome or reason', 'records'], rows, [false, false, true]));
    replace('record-counts', wrap);

    var prow = parts.map(function (p) {
      var tr = el('tr');
      cell(tr, p.topic + '/' + p.partition);
      cell(tr, p.rebuilding ? 'rebuilding' : 'live');
      cell(tr, (p.rebuilding ? 'in progress: ' : 'done: ') + count(p.rebuilt || 0) + ' records re-read', 'num');
      cell(tr, p.lag == null ? 'n/a' : count(p.lag), 'num');
      cell(tr, p.committed == null ? 'none' : count(p.committed), 'num');
      return tr;
    });
    var pw = el('div');
    pw.appendChild(el('h3', null, 'Partitions: readiness and rebuild progress'));
    pw.appendChild(table(['partition', 'phase', 'rebuild', 'lag', 'committed offset'], prow, [false, false, true, true, true]));
    pw.appendChild(el('p', 'sub', 'A partition is rebuilding while it re-reads records to restore its windows; lag counts the records still to read up to the partition end.'));
    replace('partitions', pw);
  }

  /* ---------- alerts ---------- */
  function alertRow(a) {
    var tr = el('tr');
    tr.setAttribute('data-alert', a.id);
    cell(tr, a.stream);
    cell(tr, a.rule);
    cell(tr, subjectName(a.subject) + (a.measure ? ' (' + a.measure + ')' : ''));
    var st = cell(tr, '');
    st.appendChild(el('span', 'state state-' + a.state, a.state));
    cell(tr, when(a.windowEnd), 'when');
    cell(tr, (a.withheld && a.value == null ? 'withheld' : num(a.value)) + (a.limit != null ? ' vs ' + num(a.limit) : ''), 'num');
    var msg = cell(tr, '', 'msg');
    var text = a.message || '';
    var cut = text.indexOf(': ');
    var more = el('details');
    var key = a.id + '|' + a.state + '|' + a.windowEnd;
    more.open = !!state.expanded[key];
    more.addEventListener('toggle', function () { state.expanded[key] = more.open; });
    more.appendChild(el('summary', null, cut > 0 && cut < 200 ? text.slice(0, cut) : text.slice(0, 160) + '…'));
    more.appendChild(el('p', null, text));
    msg.appendChild(more);
    var cmd = el('div', 'cmd');
    cmd.appendChild(el('span', 'sub', 'reproduce: '));
    cmd.appendChild(el('code', null, a.replayCommand || 'n/a'));
    msg.appendChild(cmd);
    tr.querySelector('td').addEventListener('click', function () { select(a.stream); });
    return tr;
  }
  function drawAlerts(alerts) {
    var only = focusedEpisodes();
    function mine(a) { return !only || only[a.id]; }
    var open = alerts.open.slice().reverse().filter(mine), recent = alerts.recent.filter(mine);
    var badge = document.getElementById('open-count');
    badge.textContent = String(alerts.open.length);
    badge.className = 'count-badge' + (alerts.open.length ? ' on' : '');
    var heads = ['stream', 'rule', 'subject', 'state', 'window end', 'value vs limit', 'message (select to read it all) and replay command'];
    var numeric = [false, false, false, false, false, true, false];
    replace('open-alerts', open.length ? wrapTable(table(heads, open.map(alertRow), numeric))
      : el('p', 'empty', only ? 'None of its episodes is open now.' : 'No open alert: no episode raised and not yet cleared since this service started.'));
    replace('recent-alerts', recent.length ? wrapTable(table(heads, recent.map(alertRow), numeric))
      : el('p', 'empty', only ? 'None of its episodes\' messages is among the recent ones.' : 'No alert message yet.'));
  }
  function wrapTable(t) { var w = el('div', 'table-wrap'); w.appendChild(t); return w; }

  /* ---------- incidents ---------- */
  function incidentsOf(alerts) { return alerts.incidents || { open: [], recent: [] }; }
  /** The newest message of incident {@code id}: open first, else the newest recent one; or null. */
  function findIncident(id) {
    var inc = incidentsOf(state.alerts), all = inc.open.concat(inc.recent);
    for (var i = 0; i < all.length; i++) { if (all[i].id === id) { return all[i]; } }
    return null;
  }
  /** The window end of the incident's opening message when it is still among the recent ones, else null. */
  function openedAt(i) {
    var first = incidentsOf(state.alerts).recent.filter(function (m) { return m.id === i.id && m.revision === 1; })[0];
    return first ? first.to : null;
  }
  function focusOn(id) {
    state.focus = state.focus === id ? null : id;
    drawIncidents(state.alerts);
    drawAlerts(state.alerts);
    if (state.focus) { document.getElementById('alerts').scrollIntoView({ block: 'start' }); }
  }
  /** One line per episode: its state, rule, subject (and stream when the incident spans several), figure vs limit. */
  function evidenceList(episodes, withStream) {
    var ul = el('ul', 'evidence');
    episodes.forEach(function (e) {
      var li = el('li');
      li.setAttribute('data-episode', e.episode);
      li.appendChild(el('span', 'state state-' + e.state, e.state));
      li.appendChild(document.createTextNode(' ' + e.rule + ' · ' + e.subject + (withStream ? ' · ' + e.stream : '')));
      li.appendChild(el('span', 'on', ' (' + (e.measure || '') + ' ' + (e.withheld && e.value == null ? 'withheld' : num(e.value))
        + (e.limit != null ? ' vs ' + num(e.limit) : '') + ')'));
      ul.appendChild(li);
    });
    return ul;
  }
  function incidentRow(i, withButton) {
    var tr = el('tr', state.focus === i.id ? 'focused' : null);
    tr.setAttribute('data-incident', i.id);
    var idCell = cell(tr, '');
    var ch = el('span', 'change change-' + i.change, i.change);
    idCell.appendChild(ch);
    idCell.appendChild(el('div', null, 'revision ' + i.revision));
    idCell.appendChild(el('div', 'incident-id', i.id));
    if (withButton) {
      var b = el('button', 'show', state.focus === i.id ? 'List every alert' : 'List its episodes');
      b.type = 'button';
      b.setAttribute('aria-pressed', state.focus === i.id ? 'true' : 'false');
      b.addEventListener('click', function () { focusOn(i.id); });
      idCell.appendChild(b);
    }
    var streams = cell(tr, '', 'streams-list');
    (i.streams || []).forEach(function (s) { streams.appendChild(el('div', null, s)); });
    var opened = openedAt(i);
    var time = cell(tr, '', 'when');
    time.appendChild(el('div', null, opened ? when(opened) : 'before ' + when(i.to)));
    time.appendChild(el('div', 'sub', 'evidence from ' + when(i.from)));
    time.appendChild(el('div', 'sub', 'to ' + when(i.to)));
    var episodes = i.evidence || [], many = (i.streams || []).length > 1;
    var evCell = cell(tr, '', 'ev');
    evCell.appendChild(el('div', 'sub', i.openEpisodes + ' of ' + episodes.length + ' episode' + (episodes.length === 1 ? '' : 's') + ' open'));
    evCell.appendChild(evidenceList(episodes.slice(0, SHOWN_EPISODES), many));
    if (episodes.length > SHOWN_EPISODES) {
      var rest = el('details', 'more');
      var restKey = 'evidence|' + i.id;
      rest.open = !!state.expanded[restKey];
      rest.addEventListener('toggle', function () { state.expanded[restKey] = rest.open; });
      rest.appendChild(el('summary', null, (episodes.length - SHOWN_EPISODES) + ' more'));
      rest.appendChild(evidenceList(episodes.slice(SHOWN_EPISODES), many));
      evCell.appendChild(rest);
    }
    var msg = cell(tr, '', 'msg');
    var more = el('details');
    var key = 'incident|' + i.id + '|' + i.revision;
    more.open = !!state.expanded[key];
    more.addEventListener('toggle', function () { state.expanded[key] = more.open; });
    more.appendChild(el('summary', null, i.reason || 'message'));
    more.appendChild(el('p', null, i.message || ''));
    msg.appendChild(more);
    var cmd = el('div', 'cmd');
    cmd.appendChild(el('span', 'sub', 'reproduce: '));
    cmd.appendChild(el('code', null, i.replayCommand || 'n/a'));
    msg.appendChild(cmd);
    return tr;
  }
  function drawIncidents(alerts) {
    var inc = incidentsOf(alerts);
    var open = inc.open.slice().reverse();
    var badge = document.getElementById('incident-count');
    badge.textContent = String(open.length);
    badge.className = 'count-badge' + (open.length ? ' on' : '');
    var heads = ['incident', 'streams', 'opened (window end)', 'its episodes (the evidence)', 'message (select to read it all) and replay command'];
    replace('open-incidents', open.length ? wrapTable(table(heads, open.map(function (i) { return incidentRow(i, true); })))
      : el('p', 'empty', 'No open incident: no episode raised and not yet cleared since this service started.'));
    replace('recent-incidents', inc.recent.length ? wrapTable(table(heads, inc.recent.map(function (i) { return incidentRow(i, false); })))
      : el('p', 'empty', 'No incident message yet.'));
  }
  /** The focused incident's episode ids (null when none is focused), and its bar above the alerts. */
  function focusedEpisodes() {
    var bar = document.getElementById('focus');
    var i = state.focus ? findIncident(state.focus) : null;
    if (!i) {
      state.focus = null;
      bar.className = 'focus hidden';
      bar.textContent = '';
      return null;
    }
    var ids = {};
    (i.evidence || []).forEach(function (e) { ids[e.episode] = true; });
    bar.className = 'focus';
    bar.textContent = '';
    bar.appendChild(el('span', null, 'Listing the ' + (i.evidence || []).length + ' episode' + ((i.evidence || []).length === 1 ? '' : 's')
      + ' of the incident on ' + (i.streams || []).join(', ') + ' (' + i.change + ', revision ' + i.revision + ').'));
    var all = el('button', 'show', 'List every alert');
    all.type = 'button';
    all.addEventListener('click', function () { focusOn(state.focus); });
    bar.appendChild(all);
    return ids;
  }

  /* ---------- stream list ---------- */
  function visibleStreams() {
    var f = state.filter.toLowerCase();
    return state.streams.filter(function (s) { return !f || s.stream.toLowerCase().indexOf(f) >= 0; });
  }
  function orsText(e) {
    var box = el('div', 'ors');
    if (!e) { return box; }
    if (withheld(e, 'coefficients')) { box.appendChild(el('span', 'withheld', 'withheld')); return box; }
    watched(e).forEach(function (c) {
      var z = drift(e, c);
      box.appendChild(el('div', null, subjectName(c) + ' ' + num(c.oddsRatio) + interval(c.lower, c.upper) + (z === null ? '' : ', drift z ' + z.toFixed(2))));
    });
    return box;
  }
  function prevalenceText(e) {
    if (!e) { return '–'; }
    if (withheld(e, 'prevalence')) { return 'withheld'; }
    var p = e.prevalence || {};
    return pct(p.value) + (p.lower == null ? '' : ' (' + pct(p.lower) + ' to ' + pct(p.upper) + ')');
  }
  function drawStreamTable() {
    var shown = visibleStreams();
    document.getElementById('shown').textContent = shown.length + ' of ' + state.streams.length + ' streams';
    var rows = shown.map(function (s) {
      var tr = el('tr', (s.openAlerts ? 'has-alert' : '') + (s.stream === state.selected ? ' selected' : ''));
      tr.setAttribute('data-stream', s.stream);
      tr.tabIndex = 0;
      var f = s.final, o = s.open;
      cell(tr, s.stream);
      cell(tr, (s.baseline || 'n/a') + (s.baselineNote ? ': ' + s.baselineNote : ''));
      cell(tr, f ? when(f.windowEnd) : 'none yet', 'when');
      cell(tr, f ? count(f.events) : '–', 'num');
      cell(tr, f ? count(f.cases) : '–', 'num');
      cell(tr, prevalenceText(f), 'num');
      tr.appendChild(el('td')).appendChild(orsText(f));
      cell(tr, o ? count(o.events) + ' events, ' + prevalenceText(o) : '–');
      cell(tr, String(s.openAlerts || 0), 'num');
      tr.addEventListener('click', function () { select(s.stream); });
      tr.addEventListener('keydown', function (ev) { if (ev.key === 'Enter') { select(s.stream); } });
      return tr;
    });
    replace('stream-table', rows.length ? table(['stream', 'baseline', 'newest final window', 'events', 'positives',
      'prevalence (interval)', 'watched odds ratios (interval), drift', 'open window', 'open alerts'], rows,
      [false, false, false, true, true, true, false, false, true]) : el('p', 'empty', state.streams.length ? 'No stream matches.' : 'No stream yet.'));
  }
  function select(name) {
    state.selected = name;
    drawStreamTable();
    refreshCharts().then(function () {
      var s = document.querySelector('#charts section.stream');
      if (s) { s.scrollIntoView({ block: 'start' }); }
    });
  }

  /* ---------- charts ---------- */
  function chartedStreams() {
    var shown = visibleStreams().slice();
    shown.sort(function (a, b) {
      var sa = a.stream === state.selected ? 0 : a.openAlerts ? 1 : 2, sb = b.stream === state.selected ? 0 : b.openAlerts ? 1 : 2;
      return sa - sb || (a.stream < b.stream ? -1 : a.stream > b.stream ? 1 : 0);
    });
    return shown.slice(0, CHARTED).map(function (s) { return s.stream; });
  }
  function series(label, role, pts, color, extra) {
    var d = { label: label, role: role, data: pts, borderColor: color, backgroundColor: color, borderWidth: 2,
      pointRadius: pts.length > 40 ? 0 : 2, pointHoverRadius: 4, spanGaps: false, fill: false, tension: 0 };
    return Object.assign(d, extra || {});
  }
  function band(label, lo, hi, fillColor) {
    var edge = { borderWidth: 0, pointRadius: 0, pointHoverRadius: 0, borderColor: 'transparent', order: 3 };
    return [series(label + ' lower', 'edge', lo, fillColor, edge),
      series(label, 'band', hi, fillColor, Object.assign({}, edge, { fill: '-1', backgroundColor: fillColor }))];
  }
  function hline(label, role, span, value, color, dash) {
    return { label: label, role: role, data: [{ x: span[0], y: value }, { x: span[1], y: value }], borderColor: color,
      backgroundColor: color, borderWidth: 1.5, borderDash: dash || [], pointRadius: 0, pointHoverRadius: 0, fill: false };
  }
  function markSets(marks) {
    return ['raised', 'continuing', 'cleared'].map(function (st) {
      var m = MARK[st], ring = st === 'continuing';
      return { label: 'alert ' + st, role: 'marker-' + st, showLine: false, order: -1,
        data: marks.filter(function (k) { return k.state === st; }).map(function (k) { return { x: k.x, y: k.y }; }),
        pointStyle: m.style, pointRadius: m.radius, pointHoverRadius: m.radius + 2, pointBorderWidth: ring ? 2.5 : 1.5,
        borderColor: ring ? m.color : '#ffffff', backgroundColor: ring ? '#ffffff' : m.color };
    });
  }
  function xAxis(ends) {
    return { type: 'linear', grid: { color: C.grid },
      ticks: { color: C.muted, maxRotation: 0, autoSkip: false, callback: function (v) { return day(v); } },
      afterBuildTicks: function (scale) {
        var inside = ends.filter(function (x) { return x >= scale.min && x <= scale.max; });
        if (!inside.length) { return; }
        var every = Math.max(1, Math.ceil(inside.length / Math.max(2, Math.floor(scale.width / 100))));
        var t = [];
        for (var i = inside.length - 1; i >= 0; i -= every) { t.unshift({ value: inside[i] }); }
        scale.ticks = t;
      } };
  }
  function yAxis(title, log) {
    var a = { type: log ? 'logarithmic' : 'linear', title: { display: true, text: title, color: C.muted }, grid: { color: C.grid },
      ticks: { color: C.muted } };
    if (log) {
      a.ticks.callback = function (v) { return num(v).replace(/\.?0+$/, ''); };
      a.afterBuildTicks = F.powersOfTwo;
    }
    return a;
  }
  function options(ends, y) {
    return { responsive: true, maintainAspectRatio: false, animation: false, parsing: true, normalized: true,
      interaction: { mode: 'nearest', intersect: false },
      plugins: { legend: { labels: { color: C.ink, boxWidth: 14, filter: function (item, data) {
        var d = data.datasets[item.datasetIndex];
        return d.role !== 'edge' && d.role !== 'limit-more' && (d.data.length > 0 || d.role.indexOf('marker') !== 0); } } },
        tooltip: { callbacks: { title: function (items) { return items.length ? 'window ending ' + day(items[0].parsed.x) : ''; } } } },
      scales: { x: xAxis(ends), y: y } };
  }
  function drawChart(grid, id, title, sub, datasets, ends, y) {
    var fig = document.getElementById(id);
    if (!fig) {
      fig = el('figure', 'chart');
      fig.id = id;
      fig.style.margin = '0';
      fig.appendChild(el('h3', null, title));
      fig.appendChild(el('p', 'sub', sub));
      var box = el('div', 'box');
      box.appendChild(document.createElement('canvas'));
      fig.appendChild(box);
      grid.appendChild(fig);
      charts[id] = new Chart(fig.querySelector('canvas'), { type: 'line', data: { datasets: datasets }, options: options(ends, y) });
    } else {
      fig.querySelector('p.sub').textContent = sub;
      var c = charts[id];
      c.data.datasets = datasets;
      c.options.scales.x = xAxis(ends);
      c.update('none');
    }
    fig.setAttribute('data-used', '1');
  }
  function streamAlerts(name) {
    var seen = {}, out = [];
    state.alerts.recent.concat(state.alerts.open).forEach(function (a) {
      var k = a.id + '|' + a.state + '|' + a.windowEnd;
      if (a.stream === name && !seen[k]) { seen[k] = true; out.push(a); }
    });
    return out;
  }
  function slug(s) { return s.replace(/[^A-Za-z0-9_-]/g, function (ch) { return '_' + ch.charCodeAt(0).toString(16); }); }
  function drawStream(name, data) {
    var id = 'stream-' + slug(name);
    var sec = document.getElementById(id);
    if (!sec) {
      sec = el('section', 'stream');
      sec.id = id;
      sec.setAttribute('data-name', name);
      var head = el('header');
      head.appendChild(el('h2', null, name));
      head.appendChild(el('span', 'sub'));
      sec.appendChild(head);
      sec.appendChild(el('div', 'now'));
      sec.appendChild(el('div', 'grid'));
    }
    document.getElementById('charts').appendChild(sec);
    var finals = data.estimates;
    var alerts = streamAlerts(name);
    sec.querySelector('header .sub').textContent = finals.length + ' final window' + (finals.length === 1 ? '' : 's') + ' charted (at most ' + LAST + '), '
      + alerts.length + ' alert message' + (alerts.length === 1 ? '' : 's') + ' marked';
    drawNow(sec.querySelector('.now'), finals.length ? finals[finals.length - 1] : null, data.open);
    var grid = sec.querySelector('.grid');
    grid.querySelectorAll('figure').forEach(function (f) { f.removeAttribute('data-used'); });
    var ends = finals.map(function (e) { return ms(e.windowEnd); });
    var span = ends.length ? [ends[0], ends[ends.length - 1]] : [0, 1];
    function pts(f) { return finals.map(function (e) { var v = f(e); return { x: ms(e.windowEnd), y: v === undefined ? null : v }; }); }
    function marksFor(test, y) {
      return alerts.filter(test).map(function (a) { return { x: ms(a.windowEnd), y: y(a), state: a.state }; })
        .filter(function (m) { return m.y !== null && m.y !== undefined && m.x >= span[0] && m.x <= span[1]; });
    }
    var withheldCount = finals.filter(function (e) { return withheld(e, 'prevalence'); }).length;
    function note(base) { return base + (withheldCount ? '; ' + withheldCount + ' window(s) withheld by the small-cell rule' : ''); }

    var prev = [series('prevalence', 'prevalence', pts(function (e) { return e.prevalence && e.prevalence.value; }), C.teal)]
      .concat(band('interval', pts(function (e) { return e.prevalence && e.prevalence.lower; }), pts(function (e) { return e.prevalence && e.prevalence.upper; }), C.tealBand));
    drawChart(grid, id + '-prevalence', 'Prevalence', note('positives / events per final window, with its interval'), prev, ends, yAxis('share positive'));

    var subjects = {};
    finals.forEach(function (e) { watched(e).forEach(function (c) { subjects[subjectName(c)] = { term: c.term, level: c.level || null }; }); });
    Object.keys(subjects).sort().forEach(function (key) {
      var s = subjects[key];
      function coef(e) { return watched(e).filter(function (c) { return c.term === s.term && (c.level || null) === s.level; })[0]; }
      var mine = function (a) { return a.subject && a.subject.term === s.term && (a.subject.level || null) === s.level; };
      var ds = [series('odds ratio', 'odds-ratio', pts(function (e) { var c = coef(e); return c ? c.oddsRatio : null; }), C.plum)]
        .concat(band('Wald interval', pts(function (e) { var c = coef(e); return c ? c.lower : null; }), pts(function (e) { var c = coef(e); return c ? c.upper : null; }), C.plumBand));
      var base = alerts.filter(function (a) { return mine(a) && a.baseline != null && a.rule.indexOf('odds-ratio') === 0; });
      if (base.length) { ds.push(hline('baseline ' + num(base[base.length - 1].baseline), 'baseline', span, base[base.length - 1].baseline, C.ochre, [6, 4])); }
      ds.push(hline('no association (1)', 'reference', span, 1, C.slate, [2, 3]));
      ds = ds.concat(markSets(marksFor(function (a) { return mine(a) && a.rule.indexOf('odds-ratio') === 0; }, function (a) { return a.observed; })));
      var last = finals.length ? drift(finals[finals.length - 1], s) : null;
      drawChart(grid, id + '-or-' + slug(key), 'Odds ratio: ' + key, note('per final window with its Wald interval' + (last === null ? '' : '; newest drift z ' + last.toFixed(2))),
        ds, ends, yAxis('odds ratio (log scale)', true));
    });

    if (finals.some(function (e) { return e.calibration; })) {
      var cal = [series('observed / expected', 'calibration', pts(function (e) { return e.calibration && e.calibration.observedExpected; }), C.ochre)]
        .concat(band('interval', pts(function (e) { return e.calibration && e.calibration.oeLower; }), pts(function (e) { return e.calibration && e.calibration.oeUpper; }), C.ochreBand));
      cal.push(hline('perfect calibration (1)', 'reference', span, 1, C.slate, [2, 3]));
      cal = cal.concat(markSets(marksFor(function (a) { return a.subject && a.subject.term === 'calibration' && a.measure === 'observed-expected-ratio'; }, function (a) { return a.observed; })));
      drawChart(grid, id + '-calibration', 'Calibration of the baseline model', note('observed / expected positives per final window'), cal, ends, yAxis('observed / expected'));
    }

    var rules = {};
    finals.forEach(function (e) { (e.cusum || []).forEach(function (c) { rules[c.rule + ' ' + subjectName(c.subject)] = c; }); });
    var keys = Object.keys(rules).sort();
    if (keys.length) {
      var cs = [];
      keys.forEach(function (k, i) {
        var color = CUSUM[i % CUSUM.length];
        function entry(e) { return (e.cusum || []).filter(function (c) { return c.rule + ' ' + subjectName(c.subject) === k; })[0]; }
        var side = rules[k].rule.replace('bernoulli-cusum-', '');
        cs.push(series('S ' + side, 'cusum', pts(function (e) { var c = entry(e); return c ? c.value : null; }), color));
        cs.push(series('largest S ' + side + ' in window', 'cusum-max', pts(function (e) { var c = entry(e); return c ? c.max : null; }), color, { borderDash: [4, 3], borderWidth: 1 }));
        cs.push(hline('limit ' + num(rules[k].limit), i === 0 ? 'limit' : 'limit-more', span, rules[k].limit, C.wine, [3, 3]));
      });
      cs = cs.concat(markSets(marksFor(function (a) { return a.rule.indexOf('cusum') >= 0; }, function (a) { return a.value; })));
      drawChart(grid, id + '-cusum', 'CUSUM against its limit', note('S at each final window end and its largest value within the window'), cs, ends, yAxis('S'));
    }
    grid.querySelectorAll('figure').forEach(function (f) {
      if (!f.getAttribute('data-used')) { if (charts[f.id]) { charts[f.id].destroy(); delete charts[f.id]; } f.remove(); }
    });
  }
  function drawNow(box, f, o) {
    box.textContent = '';
    [['Newest final window', f], ['Open window (interim)', o]].forEach(function (pair) {
      var e = pair[1], part = el('div');
      part.appendChild(el('h3', null, pair[0]));
      if (!e) { part.appendChild(el('p', 'empty', 'none yet')); box.appendChild(part); return; }
      var dl = el('dl');
      function row(k, v) { dl.appendChild(el('dt', null, k)); dl.appendChild(el('dd', null, v)); }
      row('window', when(e.windowStart) + ' to ' + when(e.windowEnd));
      row('events', count(e.events));
      row('positives', count(e.cases));
      row('prevalence', prevalenceText(e));
      var w = withheld(e, 'coefficients');
      if (w) { row('odds ratios', 'withheld (' + w + ')'); }
      watched(e).forEach(function (c) {
        var z = drift(e, c);
        row('OR ' + subjectName(c), num(c.oddsRatio) + interval(c.lower, c.upper) + (z === null ? '' : '; drift z ' + z.toFixed(2)));
      });
      part.appendChild(dl);
      box.appendChild(part);
    });
  }
  function refreshCharts() {
    var names = chartedStreams();
    return Promise.all(names.map(function (n) {
      return getJson('api/streams/' + encodeURIComponent(n) + '/estimates?last=' + LAST).then(function (d) { return [n, d]; });
    })).then(function (all) {
      var keep = {};
      all.forEach(function (p) { keep['stream-' + slug(p[0])] = true; drawStream(p[0], p[1]); });
      document.querySelectorAll('#charts section.stream').forEach(function (s) {
        if (!keep[s.id]) {
          s.querySelectorAll('figure').forEach(function (f) { if (charts[f.id]) { charts[f.id].destroy(); delete charts[f.id]; } });
          s.remove();
        }
      });
    });
  }

  function refresh() {
    return Promise.all([getJson('api/streams'), getJson('api/alerts')]).then(function (r) {
      state.streams = r[0].streams;
      state.alerts = r[1];
      drawService(r[0].service);
      drawIncidents(r[1]);
      drawAlerts(r[1]);
      drawStreamTable();
      return refreshCharts();
    }).then(function () {
      state.refreshes++;
      document.body.setAttribute('data-refreshes', String(state.refreshes));
      document.body.setAttribute('data-ready', 'true');
      document.getElementById('refreshed').textContent = 'Last refreshed ' + new Date().toISOString().slice(11, 19) + ' UTC (every ' + EVERY / 1000 + ' s).';
    }).catch(function (e) {
      document.getElementById('refreshed').textContent = 'Refresh failed (' + e.message + '); trying again.';
    }).then(function () { setTimeout(refresh, EVERY); });
  }

  document.getElementById('filter').addEventListener('input', function (ev) {
    state.filter = ev.target.value;
    drawStreamTable();
    refreshCharts();
  });
  refresh();
}());
