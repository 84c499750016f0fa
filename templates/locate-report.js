/* The locate report page: references marked on the landscape, and each reference's nearest kept structures
 * (see src/report/locate-report.ts). Input strings reach the page only through textContent or escapeForPlot. */
(function () {
  'use strict';
  var P = window.PolysiftPage;
  var data = P.readData();
  var r = data.result;
  var kept = data.kept;
  var unit = r.energyUnit;
  function $(id) { return document.getElementById(id); }
  function esc(t) { return P.escapeForPlot(t); }
  P.expectReady('landscape');

  var c = r.criterion;
  var distanceName = r.scale === 'volume' ? 'scale-free EMD' : 'EMD';
  $('run-line').textContent = r.landscapePath + ' · ' + r.keptCount + ' kept structures · PDD depth k = ' + r.k +
    ', hydrogens ' + r.hydrogens + ' · found means ' + distanceName + ' ≤ ' + P.fmtDistance(c.toleranceAngstrom) + ' Å, or ≤ ' +
    P.fmtDistance(c.gapLimitAngstrom) + ' Å with the second nearest at least ' + c.gapRatio + '× farther';

  function hitText(h) {
    return h.id + ' (' + distanceName + ' ' + P.fmtDistance(h.distanceAngstrom) + ' Å' + (h.energyRank !== null ? ', energy rank ' + h.energyRank : '') +
      (h.energyRel !== null ? ', ' + P.fmt(h.energyRel, 2) + ' ' + unit + ' above the lowest' : '') + ')';
  }
  function isMatch(ref, h) { return ref.found && ref.match && h.index === ref.match.index; }
  // A kept structure of another composition nearest to the reference: same geometry, other chemistry.
  function otherChemistryText(ref) {
    if (!ref.nearestOtherComposition || !ref.nearest.length) return '';
    return ' Note: the nearest kept structure ' + ref.nearest[0].id + ' has another composition (' + ref.nearest[0].composition +
      '; the reference is ' + ref.composition + '): same geometry, other chemistry, never counted as found.';
  }
  r.references.forEach(function (ref, q) {
    var text = (ref.found ? ref.id + ': found as ' + hitText(ref.match) + ': ' + ref.decisionText :
      ref.nearest.length ? ref.id + ': not found: ' + ref.decisionText + '; nearest ' + hitText(ref.nearest[0]) :
      ref.id + ': not found; the landscape keeps no structures') + otherChemistryText(ref);
    $('found-list').appendChild(P.el('li', { 'data-found': ref.found ? 'yes' : 'no' },
      P.el('span', { text: '■ ', style: 'color:' + data.referenceColours[q] }), text));
  });
  if (r.unusable.length) {
    $('unusable-box').hidden = false;
    r.unusable.forEach(function (u) { $('unusable-list').appendChild(P.el('li', { text: u.source + ' (line ' + u.line + '): ' + u.reason })); });
  }

  // Landscape with the references marked.
  var rowOf = {};
  kept.index.forEach(function (i, j) { rowOf[i] = j; });
  var have = kept.index.map(function (_i, j) { return j; }).filter(function (j) { return kept.energyRel[j] !== null && kept.density[j] !== null; });
  var traces = [{
    type: P.scatterType(have.length), mode: 'markers', name: 'kept structures',
    x: have.map(function (j) { return kept.density[j]; }), y: have.map(function (j) { return kept.energyRel[j]; }),
    text: have.map(function (j) { return esc(kept.id[j]) + '<br>rank ' + (kept.rank[j] === null ? '–' : kept.rank[j]) + ', ' + P.fmt(kept.energyRel[j], 2) + ' ' + esc(unit); }),
    hoverinfo: 'text', marker: { color: '#b8c1cc', size: 7 },
  }];
  var shapes = [];
  r.references.forEach(function (ref, q) {
    var colour = data.referenceColours[q];
    var near = ref.nearest.filter(function (h) { return !isMatch(ref, h) && h.energyRel !== null && h.densityGPerCm3 !== null; });
    traces.push({
      type: 'scatter', mode: 'markers', name: ref.id + ': nearest',
      x: near.map(function (h) { return h.densityGPerCm3; }), y: near.map(function (h) { return h.energyRel; }),
      text: near.map(function (h) { return esc(ref.id) + ' → ' + esc(hitText(h)); }), hoverinfo: 'text',
      marker: { symbol: 'circle-open', size: 13, color: colour, line: { width: 2, color: colour } },
    });
    if (ref.found && ref.match.energyRel !== null && ref.match.densityGPerCm3 !== null) {
      traces.push({
        type: 'scatter', mode: 'markers', name: ref.id + ': found',
        x: [ref.match.densityGPerCm3], y: [ref.match.energyRel], text: [esc(ref.id) + ' found as ' + esc(hitText(ref.match))], hoverinfo: 'text',
        marker: { symbol: 'star', size: 18, color: colour, line: { width: 1, color: '#1d2430' } },
      });
    }
    if (ref.densityGPerCm3 !== null) {
      shapes.push({ type: 'line', xref: 'x', yref: 'paper', x0: ref.densityGPerCm3, x1: ref.densityGPerCm3, y0: 0, y1: 1,
        line: { color: colour, width: 1.5, dash: 'dash' } });
    }
  });
  Plotly.newPlot($('landscape-plot'), traces, P.baseLayout({
    showlegend: true, legend: { orientation: 'h', y: -0.15 }, shapes: shapes,
    xaxis: { title: { text: 'Density (g/cm³)' }, zeroline: false },
    yaxis: { title: { text: 'Energy above the lowest (' + unit + ')' }, zeroline: false },
    margin: { l: 64, r: 24, t: 12, b: 90 },
  }), P.plotConfig).then(function () { P.markReady('landscape'); });

  // One table per reference.
  var box = $('reference-tables');
  r.references.forEach(function (ref, q) {
    var table = P.el('table', { className: 'ps-table' },
      P.el('caption', { className: 'ps-sr', text: 'Nearest kept structures of ' + ref.id }),
      P.el('thead', null, P.el('tr', null, ['Order', 'Id', (r.scale === 'volume' ? 'Scale-free EMD (Å)' : 'EMD (Å)'), 'Energy rank', 'Rel. energy (' + unit + ')', 'Density (g/cm³)', 'Space group', 'Z′', 'Family', 'Composition'].map(function (h) {
        return P.el('th', { scope: 'col', text: h });
      }))),
      P.el('tbody', null, ref.nearest.map(function (h) {
        return P.el('tr', { 'aria-selected': isMatch(ref, h) ? 'true' : 'false' },
          P.el('td', { className: 'ps-num', text: h.order }), P.el('td', { className: 'ps-id', text: h.id }),
          P.el('td', { className: 'ps-num', text: P.fmtDistance(h.distanceAngstrom) }),
          P.el('td', { className: 'ps-num', text: h.energyRank === null ? '–' : h.energyRank }),
          P.el('td', { className: 'ps-num', text: P.fmt(h.energyRel, 2) }), P.el('td', { className: 'ps-num', text: P.fmt(h.densityGPerCm3, 3) }),
          P.el('td', { text: h.spaceGroup === null ? '–' : h.spaceGroup }),
          P.el('td', { className: 'ps-num', text: h.zPrime === null || h.zPrime === undefined ? '–' : String(Math.round(h.zPrime * 1000) / 1000) }),
          P.el('td', { className: 'ps-num', text: h.family < 0 ? 'none' : String(h.family) }),
          P.el('td', { text: h.composition === null || h.composition === undefined ? '–' : h.composition }));
      })));
    box.appendChild(P.el('section', { className: 'ps-card', 'aria-label': 'Reference ' + ref.id },
      P.el('h2', null, P.el('span', { text: '■ ', style: 'color:' + data.referenceColours[q] }), 'Reference ', P.el('span', { className: 'ps-id', text: ref.id })),
      P.el('p', { className: 'ps-muted', text: ref.source + (ref.spaceGroup ? ' · ' + ref.spaceGroup + (ref.zPrime === null || ref.zPrime === undefined ? '' : ', Z′ ' + Math.round(ref.zPrime * 1000) / 1000) : '') + (ref.densityGPerCm3 !== null ? ' · density ' + P.fmt(ref.densityGPerCm3, 3) + ' g/cm³' : '') }),
      P.el('p', { className: 'ps-statement', text: (ref.found ? 'Found: ' : 'Not found: ') + ref.decisionText + '.' + otherChemistryText(ref) }),
      P.el('div', { className: 'ps-table-wrap' }, table),
      ref.notes.length ? P.el('ul', { className: 'ps-notes' }, ref.notes.map(function (n) { return P.el('li', { text: n }); })) : null));
  });
})();
