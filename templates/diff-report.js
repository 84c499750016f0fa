/* The diff report page: draws the overlaid landscapes, the rank plot, the shift plot and the tables from
 * the page data (see src/report/diff-report.ts). Input strings reach the page only through textContent
 * or escapeForPlot. */
(function () {
  'use strict';
  var P = window.PolysiftPage;
  var data = P.readData();
  var d = data.diff;
  var unit = d.energyUnit;
  var byRun = { A: [], B: [] };
  d.structures.forEach(function (s, i) { byRun[s.run].push(i); });

  P.expectReady('overlay');
  P.expectReady('rank');
  P.expectReady('shift');
  P.expectReady('tables');

  function $(id) { return document.getElementById(id); }
  function esc(t) { return P.escapeForPlot(t); }
  function rel(x) { return P.fmt(x, 2); }

  // Header and summary.
  $('run-line').textContent = 'A: ' + d.runs[0].path + '   ·   B: ' + d.runs[1].path;
  var rho = d.spearman === null ? 'not defined (fewer than two matched pairs with energies in both runs)' : P.fmt(d.spearman, 4);
  $('summary-statement').textContent =
    d.counts.both + ' kept structures were found by both runs (matched within ' + P.fmtDistance(d.toleranceAngstrom) + ' Å EMD), ' +
    d.counts.onlyA + ' only by A and ' + d.counts.onlyB + ' only by B. Spearman\u2019s rank correlation of the energies over ' +
    d.spearmanPairs + ' matched pairs: ' + rho + '.';
  var counts = $('counts-table').tBodies[0];
  [['In both runs', d.counts.both], ['Only in A', d.counts.onlyA], ['Only in B', d.counts.onlyB],
   ['Kept in A', d.counts.keptA], ['Kept in B', d.counts.keptB]].forEach(function (r) {
    counts.appendChild(P.el('tr', null, P.el('th', { scope: 'row', text: r[0] }), P.el('td', { className: 'ps-num', text: r[1] })));
  });
  var runs = $('runs-list');
  d.runs.forEach(function (r) {
    runs.appendChild(P.el('dt', { text: 'Run ' + r.label }));
    runs.appendChild(P.el('dd', { text: r.path + ' (' + r.kept + ' kept; duplicate tolerance ' + r.toleranceAngstrom + ' Å; ' + r.createdAt + ')' }));
  });
  runs.appendChild(P.el('dt', { text: 'Invariants' }));
  runs.appendChild(P.el('dd', { text: 'PDD depth k = ' + d.k + ', hydrogens ' + d.hydrogens }));
  runs.appendChild(P.el('dt', { text: 'Matching' }));
  runs.appendChild(P.el('dd', { text: d.matching.objective + '; ' + d.matching.method }));
  d.notes.forEach(function (n) { $('diff-notes').appendChild(P.el('li', { text: n })); });

  // Overlaid landscapes: one trace per run and presence, and one line trace per EMD colour class.
  function hover(s) {
    return esc(s.id) + ' (run ' + s.run + ')<br>rank ' + (s.rank === null ? '–' : s.rank) + ', ' + rel(s.energyRel) + ' ' + esc(unit) +
      ' above the lowest<br>density ' + P.fmt(s.densityGPerCm3, 3) + ' g/cm³' +
      (s.partner !== null ? '<br>partner ' + esc(s.partner) + ', EMD ' + P.fmtDistance(s.partnerDistance) + ' Å' :
        '<br>nearest in the other run ' + (s.nearestOther === null ? '–' : esc(s.nearestOther) + ', EMD ' + P.fmtDistance(s.nearestOtherDistance) + ' Å'));
  }
  var markerTraces = [];
  [['A', 'both', 'circle', '#0072b2', 'A, in both'], ['A', 'only-A', 'circle-open', '#0072b2', 'A only'],
   ['B', 'both', 'diamond', '#d55e00', 'B, in both'], ['B', 'only-B', 'diamond-open', '#d55e00', 'B only']].forEach(function (t) {
    var idx = byRun[t[0]].filter(function (i) {
      var s = d.structures[i];
      return s.presence === t[1] && s.energyRel !== null && s.densityGPerCm3 !== null;
    });
    markerTraces.push({
      type: P.scatterType(idx.length), mode: 'markers', name: t[4],
      x: idx.map(function (i) { return d.structures[i].densityGPerCm3; }),
      y: idx.map(function (i) { return d.structures[i].energyRel; }),
      text: idx.map(function (i) { return hover(d.structures[i]); }), hoverinfo: 'text',
      marker: { symbol: t[2], color: t[3], size: 9, line: { width: 1.5, color: t[3] } },
    });
  });
  var structOf = { A: {}, B: {} };
  d.structures.forEach(function (s) { structOf[s.run][s.index] = s; });
  var lineTraces = data.pairClasses.colours.map(function (colour, c) {
    var x = [], y = [];
    d.pairs.forEach(function (p, k) {
      if (data.pairClass[k] !== c) return;
      var a = structOf.A[p.a], b = structOf.B[p.b];
      if (a.energyRel === null || b.energyRel === null || a.densityGPerCm3 === null || b.densityGPerCm3 === null) return;
      x.push(a.densityGPerCm3, b.densityGPerCm3, null);
      y.push(a.energyRel, b.energyRel, null);
    });
    var lo = data.pairClasses.boundsAngstrom[c], hi = data.pairClasses.boundsAngstrom[c + 1];
    return { type: 'scatter', mode: 'lines', x: x, y: y, hoverinfo: 'skip', name: 'EMD ' + P.fmtDistance(lo) + '–' + P.fmtDistance(hi) + ' Å',
      line: { color: colour, width: 1.5 }, showlegend: false };
  });
  // A colour bar for the line classes, drawn by an invisible marker trace.
  var bounds = data.pairClasses.boundsAngstrom;
  var bar = bounds.length > 1 ? [{
    type: 'scatter', mode: 'markers', x: [null], y: [null], hoverinfo: 'skip', showlegend: false,
    marker: { color: [bounds[0]], cmin: bounds[0], cmax: bounds[bounds.length - 1], colorscale: data.pairClasses.colourscale, showscale: true,
      colorbar: { title: { text: 'EMD (Å)' }, thickness: 14, tickvals: bounds, ticktext: data.pairClasses.tickText } },
  }] : [];
  var overlay = $('overlay-plot');
  Plotly.newPlot(overlay, lineTraces.concat(markerTraces, bar), P.baseLayout({
    showlegend: true, legend: { orientation: 'h', y: -0.15 },
    xaxis: { title: { text: 'Density (g/cm³)' }, zeroline: false },
    yaxis: { title: { text: 'Energy above the lowest (' + unit + ')' }, zeroline: false },
    margin: { l: 64, r: 24, t: 12, b: 90 },
  }), P.plotConfig).then(function () { P.markReady('overlay'); });
  $('show-pair-lines').addEventListener('change', function (ev) {
    var vis = ev.target.checked;
    Plotly.restyle(overlay, { visible: vis }, lineTraces.map(function (_t, i) { return i; }));
  });

  // Rank against rank, with the diagonal of unchanged ranks.
  var ranked = d.pairs.filter(function (p) { return p.rankA !== null && p.rankB !== null; });
  var maxRank = 1;
  ranked.forEach(function (p) { maxRank = Math.max(maxRank, p.rankA, p.rankB); });
  $('rank-note').textContent = ranked.length + ' matched pairs with energies in both runs. Points on the diagonal kept their energy rank; ' +
    'Spearman\u2019s rank correlation ' + rho + '.';
  Plotly.newPlot($('rank-plot'), [
    { type: 'scatter', mode: 'lines', x: [1, maxRank], y: [1, maxRank], hoverinfo: 'skip', line: { color: '#9aa4b1', dash: 'dot', width: 1 } },
    { type: P.scatterType(ranked.length), mode: 'markers', x: ranked.map(function (p) { return p.rankA; }), y: ranked.map(function (p) { return p.rankB; }),
      text: ranked.map(function (p) { return esc(p.idA) + ' ↔ ' + esc(p.idB) + '<br>rank ' + p.rankA + ' in A, ' + p.rankB + ' in B<br>EMD ' + P.fmtDistance(p.emdAngstrom) + ' Å'; }),
      hoverinfo: 'text', marker: { size: 8, color: ranked.map(function (p) { return p.emdAngstrom; }), cmin: bounds[0], cmax: bounds[bounds.length - 1],
        colorscale: data.pairClasses.colourscale, line: { width: 0.5, color: '#1d2430' } } },
  ], P.baseLayout({
    xaxis: { title: { text: 'Energy rank in A' }, range: [0, maxRank + 1], zeroline: false },
    yaxis: { title: { text: 'Energy rank in B' }, range: [0, maxRank + 1], zeroline: false },
  }), P.plotConfig).then(function () { P.markReady('rank'); });

  var shifted = d.pairs.filter(function (p) { return p.energyRelShift !== null; });
  // The shift axis: when every pair shifted by (nearly) the same amount, the library would stretch rounding noise
  // over the whole axis; instead the range spans zero and the shift with a margin, and labels are rounded.
  var sLo = Infinity, sHi = -Infinity;
  shifted.forEach(function (p) { sLo = Math.min(sLo, p.energyRelShift); sHi = Math.max(sHi, p.energyRelShift); });
  var shiftAxis = { title: { text: 'Shift B − A (' + unit + ')' }, zeroline: true };
  if (shifted.length > 0) {
    var lo = Math.min(0, sLo), hi = Math.max(0, sHi);
    var margin = Math.max(0.05, 0.2 * (hi - lo));
    shiftAxis.range = [lo - margin, hi + margin];
    shiftAxis.tickformat = hi - lo + 2 * margin >= 5 ? '.0f' : hi - lo + 2 * margin >= 0.5 ? '.1f' : '.2f';
  }
  var constantShift = shifted.length > 1 && sHi - sLo <= 0.005 ? (sLo + sHi) / 2 : null;
  $('shift-note').textContent = 'Energy above the lowest in B minus that in A, for each matched pair, against its energy in A.' +
    (constantShift === null ? '' : ' Every matched pair shifted by the same ' + rel(constantShift) + ' ' + unit +
      ' (within 0.005): the matched structures have the same energies relative to each other in both runs, and the ' +
      'shift is the difference between the two runs\u2019 zero points (each run measures from its own lowest structure).');
  Plotly.newPlot($('shift-plot'), [
    { type: P.scatterType(shifted.length), mode: 'markers', x: shifted.map(function (p) { return p.energyRelA; }), y: shifted.map(function (p) { return p.energyRelShift; }),
      text: shifted.map(function (p) { return esc(p.idA) + ' ↔ ' + esc(p.idB) + '<br>shift ' + rel(p.energyRelShift) + ' ' + esc(unit) + '<br>density shift ' + P.fmt(p.densityShiftGPerCm3, 4) + ' g/cm³'; }),
      hoverinfo: 'text', marker: { size: 8, color: '#0b6e69' } },
  ], P.baseLayout({
    xaxis: { title: { text: 'Energy above the lowest in A (' + unit + ')' } },
    yaxis: shiftAxis,
  }), P.plotConfig).then(function () { P.markReady('shift'); });

  // Tables.
  var pairIdx = d.pairs.map(function (_p, i) { return i; });
  function num(v, dec) { return { numeric: true, value: v, text: function (i) { return P.fmt(v(i), dec); } }; }
  function col(label, spec) { spec.label = label; return spec; }
  P.createTable({
    table: $('pairs-table'), items: pairIdx, pageSize: 50, filterInput: $('pairs-filter'), countEl: $('pairs-count'),
    prevButton: $('pairs-prev'), nextButton: $('pairs-next'), pageEl: $('pairs-page'),
    filterText: function (i) { return d.pairs[i].idA + ' ' + d.pairs[i].idB; },
    columns: [
      col('A', { value: function (i) { return d.pairs[i].idA; }, text: function (i) { return d.pairs[i].idA; } }),
      col('B', { value: function (i) { return d.pairs[i].idB; }, text: function (i) { return d.pairs[i].idB; } }),
      col('EMD (Å)', { numeric: true, value: function (i) { return d.pairs[i].emdAngstrom; }, text: function (i) { return P.fmtDistance(d.pairs[i].emdAngstrom); } }),
      col('Rank A', num(function (i) { return d.pairs[i].rankA; }, 0)),
      col('Rank B', num(function (i) { return d.pairs[i].rankB; }, 0)),
      col('Rel. energy A (' + unit + ')', num(function (i) { return d.pairs[i].energyRelA; }, 2)),
      col('Rel. energy B (' + unit + ')', num(function (i) { return d.pairs[i].energyRelB; }, 2)),
      col('Shift B − A', num(function (i) { return d.pairs[i].energyRelShift; }, 2)),
      col('Density shift (g/cm³)', num(function (i) { return d.pairs[i].densityShiftGPerCm3; }, 4)),
      col('Mutual nearest', { value: function (i) { return d.pairs[i].mutualNearest ? 1 : 0; }, text: function (i) { return d.pairs[i].mutualNearest ? 'yes' : 'no'; } }),
    ],
  });
  function onlyTable(run, presence, prefix) {
    var items = byRun[run].filter(function (i) { return d.structures[i].presence === presence; });
    var S = function (i) { return d.structures[i]; };
    P.createTable({
      table: $(prefix + '-table'), items: items, pageSize: 25,
      prevButton: $(prefix + '-prev'), nextButton: $(prefix + '-next'), pageEl: $(prefix + '-page'),
      columns: [
        col('Id', { value: function (i) { return S(i).id; }, text: function (i) { return S(i).id; } }),
        col('Rank', num(function (i) { return S(i).rank; }, 0)),
        col('Rel. energy (' + unit + ')', num(function (i) { return S(i).energyRel; }, 2)),
        col('Density (g/cm³)', num(function (i) { return S(i).densityGPerCm3; }, 3)),
        col('Space group', { value: function (i) { return S(i).spaceGroup; }, text: function (i) { return S(i).spaceGroup === null ? '–' : S(i).spaceGroup; } }),
        col('Z′', num(function (i) { return S(i).zPrime === undefined ? null : S(i).zPrime; }, 3)),
        col('Nearest in other run', { value: function (i) { return S(i).nearestOther; }, text: function (i) { return S(i).nearestOther === null ? '–' : S(i).nearestOther; } }),
        col('Its EMD (Å)', { numeric: true, value: function (i) { return S(i).nearestOtherDistance; }, text: function (i) { return P.fmtDistance(S(i).nearestOtherDistance); } }),
        // Flags (README): likely one flat minimum split across the runs, or other chemistry within the tolerance.
        col('Flags', { value: function (i) { return (S(i).flags || []).join(' '); }, text: function (i) {
          var f = S(i).flags || [];
          if (f.length === 0) return '–';
          return f.join(' ') + (S(i).flatPartner ? ' (with ' + S(i).flatPartner + ', ' + P.fmtDistance(S(i).flatPartnerDistance) + ' Å)' : '');
        } }),
      ],
    });
  }
  onlyTable('A', 'only-A', 'only-a');
  onlyTable('B', 'only-B', 'only-b');
  P.markReady('tables');
})();
