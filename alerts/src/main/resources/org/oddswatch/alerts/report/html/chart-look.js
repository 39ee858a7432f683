/* oddswatch pages: the chart look both pages share (no animation, the page's ink, grid and font). */
Chart.defaults.animation = false;
Chart.defaults.maintainAspectRatio = false;
Chart.defaults.color = '#22313b';
Chart.defaults.borderColor = '#ebe6dc';
Chart.defaults.font.family = 'system-ui, -apple-system, "Segoe UI", Roboto, "Noto Sans", sans-serif';
Chart.defaults.font.size = 12;
/* What all pages' scripts share: an element maker and the figures' wording (dates in UTC, numbers, per cent). */
window.oddswatchPage = {
  el: function (tag, cls, text) {
    var e = document.createElement(tag);
    if (cls) { e.className = cls; }
    if (text !== undefined && text !== null) { e.textContent = String(text); }
    return e;
  },
  day: function (t) { return new Date(t).toISOString().slice(0, 10); },
  when: function (t) {
    if (t === null || t === undefined) { return '–'; }
    var s = new Date(t).toISOString();
    return s.slice(11, 19) === '00:00:00' ? s.slice(0, 10) : s.slice(0, 16).replace('T', ' ') + ' UTC';
  },
  num: function (v) {
    if (v === null || v === undefined) { return 'n/a'; }
    var a = Math.abs(v);
    return a !== 0 && a < 0.01 ? v.toExponential(2) : a < 10 ? v.toFixed(3) : v.toFixed(2);
  },
  /** Ticks of a logarithmic axis at the powers of two within it (when at least two are). */
  powersOfTwo: function (scale) {
    var t = [];
    for (var p = -6; p <= 8; p++) {
      var v = Math.pow(2, p);
      if (v >= scale.min && v <= scale.max) { t.push({ value: v }); }
    }
    if (t.length >= 2) { scale.ticks = t; }
  },
  pct: function (v) { return v === null || v === undefined ? 'n/a' : (100 * v).toFixed(1) + ' %'; }
};
