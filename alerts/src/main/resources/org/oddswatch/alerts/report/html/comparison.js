/* oddswatch tune comparison: the settings table, messages by rule (Chart.js) and each setting's episodes. */
(function () {
  'use strict';
  var data = JSON.parse(document.getElementById('oddswatch-data').textContent);
  var RULES = ['#2b7a78', '#b4532a', '#a86b16', '#7b4b7e', '#55773a', '#3f6ea5', '#9b2f45', '#5d6b75'];
  function el(tag, cls, text) {
    var e = document.createElement(tag);
    if (cls) { e.className = cls; }
    if (text !== undefined && text !== null) { e.textContent = String(text); }
    return e;
  }
  function table(heads, rows, numeric) {
    var t = el('table'), head = el('tr'), body = el('tbody');
    heads.forEach(function (h) { head.appendChild(el('th', null, h)); });
    t.appendChild(el('thead')).appendChild(head);
    rows.forEach(function (r) {
      var tr = el('tr');
      r.forEach(function (v, i) {
        var td = el('td', numeric.indexOf(i) >= 0 ? 'num' : null);
        if (v instanceof Node) { td.appendChild(v); } else { td.textContent = v === null ? '' : String(v); }
        tr.appendChild(td);
      });
      body.appendChild(tr);
    });
    t.appendChild(body);
    return t;
  }
  function first(f) { return f ? f.stream + ' · ' + f.rule + ' · ' + f.subject + ' · ' + f.windowEnd : 'none'; }

  document.getElementById('settings-table').appendChild(table(
    ['Setting', 'Changes or definition', 'Messages', 'Episodes', 'First episode raised' + (data.after ? ' at or after ' + data.after : '')],
    data.settings.map(function (s) { return [s.name, s.change, s.messages, s.episodes, first(s.firstRaised)]; }), [2, 3]));

  new Chart(document.querySelector('#by-rule canvas'), {
    type: 'bar',
    data: {
      labels: data.settings.map(function (s) { return s.name; }),
      datasets: data.rules.map(function (rule, i) {
        return { label: rule, data: data.counts[rule], backgroundColor: RULES[i % RULES.length], borderWidth: 0 };
      })
    },
    options: { scales: { y: { beginAtZero: true, title: { display: true, text: 'alert messages' } } },
      plugins: { legend: { position: 'bottom' } } }
  });

  var holder = document.getElementById('episodes');
  data.settings.forEach(function (s, i) {
    var list = data.episodes[i];
    var panel = el('section', 'panel');
    panel.setAttribute('data-setting', s.name);
    panel.appendChild(el('h2', null, s.name + ': episodes raised'));
    panel.appendChild(el('p', 'sub', s.change + ' · ' + list.filter(function (e) { return e.mark === 'added'; }).length
      + ' added, ' + list.filter(function (e) { return e.mark === 'removed'; }).length + ' removed against the replay'));
    var wrap = el('div', 'table-wrap');
    wrap.appendChild(list.length === 0 ? el('p', 'empty', 'No episode raised and none removed.') : table(
      ['Stream', 'Rule', 'Subject', 'Window end', 'Against the replay'],
      list.map(function (e) {
        return [e.stream, e.rule, e.subject, e.windowEnd, e.mark ? el('span', 'mark mark-' + e.mark, e.mark) : 'in both'];
      }), []));
    panel.appendChild(wrap);
    holder.appendChild(panel);
  });
  document.body.setAttribute('data-ready', 'true');
}());
