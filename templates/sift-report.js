/* The sift report page: draws the landscape held in the page data (see src/report/sift-data.ts). */
(function () {
  'use strict';
  var P = window.PolysiftPage;
  var el = P.el;
  performance.mark('polysift:start');
  var D = P.readData();
  performance.mark('polysift:data');
  var S = D.s;
  var unit = D.parameters.energyUnit;
  var hasEnergies = D.lowestEnergy !== null;
  var DUPLICATE = 1, REJECTED = 2;
  var SYMBOLS = ['circle', 'square', 'diamond', 'triangle-up', 'cross', 'x', 'star', 'hexagon'];
  var SYMBOL_CHARS = ['●', '■', '◆', '▲', '✚', '✖', '★', '⬢'];
  var report = { traces: {}, selected: null };
  window.polysiftReport = report;
  P.expectReady('landscape');

  // ---- Derived lookups -------------------------------------------------------------------------
  var keptPos = {}; // structure index -> position in D.kept
  D.kept.forEach(function (k, p) { keptPos[k] = p; });
  // Nearest kept neighbours of each kept structure, from the edges, nearest first.
  var neighbours = {};
  for (var e = 0; e < D.edges.length; e += 3) {
    var a = D.edges[e], b = D.edges[e + 1], d = D.edges[e + 2];
    (neighbours[a] = neighbours[a] || []).push([b, d]);
    (neighbours[b] = neighbours[b] || []).push([a, d]);
  }
  Object.keys(neighbours).forEach(function (k) { neighbours[k].sort(function (x, y) { return x[1] - y[1]; }); });
  // Duplicates of each kept structure, closest first.
  var membersOf = {};
  var duplicates = [];
  for (var i = 0; i < S.id.length; i++) {
    if (S.status[i] === DUPLICATE) {
      duplicates.push(i);
      if (S.keptIndex[i] !== null) (membersOf[S.keptIndex[i]] = membersOf[S.keptIndex[i]] || []).push(i);
    }
  }
  Object.keys(membersOf).forEach(function (k) {
    membersOf[k].sort(function (x, y) { return (S.distanceToKept[x] || 0) - (S.distanceToKept[y] || 0); });
  });
  var amdRow = {};
  var amdOf = null;
  if (D.amd) {
    D.amd.index.forEach(function (s, r) { amdRow[s] = r; });
    amdOf = P.packedRows(D.amd.base64, D.amd.k, D.amd.encoding, D.amdStepAngstrom);
  }

  function blockOf(i) { return S.block[i] === null ? S.id[i] : S.block[i]; }
  function source(i) { return D.files[S.file[i]] + '#' + blockOf(i); }
  function yOf(i) { return hasEnergies ? S.energyRel[i] : 0; }
  function familyColour(f) { return f < 0 ? D.unassignedColour : D.familyColours[f % D.familyColours.length]; }
  function familySymbol(f) { return f < 0 ? 'circle' : SYMBOLS[Math.floor(f / D.familyColours.length) % SYMBOLS.length]; }
  function familyChar(f) { return f < 0 ? '●' : SYMBOL_CHARS[Math.floor(f / D.familyColours.length) % SYMBOL_CHARS.length]; }
  // One spelling for a structure HDBSCAN leaves in no family, everywhere on the page.
  function familyLabel(f) { return f < 0 ? 'none' : String(f); }
  function familyName(f) { return 'family ' + familyLabel(f); }
  function markerSize(members) { return Math.min(24, 6 + 4 * Math.sqrt(Math.max(0, members - 1))); }
  /** The cell as one line, lengths in Å and angles in degrees (null when not known); its volume in Å³ apart. */
  function cellText(i) {
    var c = S.cell[i];
    if (!c) return null;
    return 'a, b, c ' + P.fmt(c[0], 3) + ', ' + P.fmt(c[1], 3) + ', ' + P.fmt(c[2], 3) + ' Å; α, β, γ ' +
      P.fmt(c[3], 2) + ', ' + P.fmt(c[4], 2) + ', ' + P.fmt(c[5], 2) + '°';
  }
  function volumeText(i) { return S.cell[i] && S.cell[i][6] !== null ? P.fmt(S.cell[i][6], 1) + ' Å³' : null; }
  function energyText(i) { return hasEnergies ? P.fmt(S.energyRel[i], 3) + ' ' + unit : 'no energy'; }
  function zPrimeText(i) { return S.zPrime[i] === null ? '–' : String(Math.round(S.zPrime[i] * 1000) / 1000); }
  // 'P21/c, Z′ 1 (written in P1)': the group the crystal has, and what its file declared when that differs.
  function symmetryText(i) {
    if (S.spaceGroup[i] === null) return 'space group unknown';
    var t = S.spaceGroup[i] + ', Z′ ' + zPrimeText(i);
    if (S.sgDetected[i] === 0) return t + ' (as declared)';
    var w = S.writtenIn[i];
    if (w && w !== S.spaceGroup[i] + ' x ' + S.members[i]) return t + ' (members written in ' + w + ')';
    return S.sgDeclared[i] !== null && S.sgDeclared[i] !== S.spaceGroup[i] ? t + ' (written in ' + S.sgDeclared[i] + ')' : t;
  }
  var groupOfSpelling = {};
  (D.groupSpellings || []).forEach(function (g) { g[1].split(' | ').forEach(function (sp) { groupOfSpelling[sp] = g[0]; }); });
  function flagsOf(i) { return D.flagSets[S.flags[i]]; }

  // ---- Header ----------------------------------------------------------------------------------
  var c = D.counts;
  document.getElementById('run-line').textContent =
    c.input + ' structures read · ' + c.kept + ' kept · ' + c.duplicate + ' duplicates · ' + c.rejected + ' rejected · ' +
    c.outsideWindow + ' outside the energy window — duplicate tolerance ' + D.parameters.toleranceAngstrom + ' Å' +
    (D.parameters.toleranceMode === 'auto' ? ' (auto' + (D.toleranceChoice && !D.toleranceChoice.clear ? ', no clear gap' : '') + ')' : '') + ', ' +
    D.tool.name + ' ' + D.tool.version + ', ' + D.createdAt;
  var fc = D.flagCounts;
  if (fc.otherChemistry + fc.energyMismatch + fc.flatMinimum > 0) {
    document.getElementById('run-line').textContent += ' · flagged: ' + [
      fc.otherChemistry ? fc.otherChemistry + ' other chemistry' : null,
      fc.energyMismatch ? fc.energyMismatch + ' energy mismatch' : null,
      fc.flatMinimum ? fc.flatMinimum + ' flat minimum' : null,
    ].filter(Boolean).join(', ') + ' (see Run summary)';
  }

  // ---- Landscape -------------------------------------------------------------------------------
  var landscapeDiv = document.getElementById('landscape-plot');
  var gl = P.scatterType(D.kept.length + duplicates.length);
  // Kept markers as SVG up to KEPT_SVG_LIMIT: measured with 10,000 kept structures in headless Chromium
  // (software WebGL), SVG markers were drawn sooner than WebGL ones (src/bench/report.ts).
  var KEPT_SVG_LIMIT = 20000;
  var keptType = D.kept.length <= KEPT_SVG_LIMIT ? 'scatter' : gl;
  var traces = [];
  var classes = D.edgeClasses;
  // Neighbourhood lines: one SVG path per EMD colour class, drawn by the page into the plot's own layer
  // (under the markers, clipped to the plot area) and redrawn after every zoom or pan. As line traces the
  // plotting library spends seconds on 30,000 edges (measured with src/bench/report.ts); here it is one
  // pass over the edges mapping data to pixels.
  var lineRank = D.view.lineRank;
  var lineMaxAngstrom = D.view.lineMaxAngstrom === null ? Infinity : D.view.lineMaxAngstrom;
  var linesGroup = null;
  /** Whether edge q is shown under the current line controls. */
  function edgeShown(q) { return D.edgeRank[q] <= lineRank && D.edges[3 * q + 2] <= lineMaxAngstrom; }
  function drawLines() {
    var plotLayer = landscapeDiv.querySelector('.overplot > .xy');
    var fl = landscapeDiv._fullLayout;
    if (!plotLayer || !fl) return;
    if (!linesGroup || linesGroup.parentNode !== plotLayer) {
      linesGroup = document.createElementNS('http://www.w3.org/2000/svg', 'g');
      linesGroup.setAttribute('class', 'ps-lines');
      linesGroup.setAttribute('pointer-events', 'none');
      plotLayer.insertBefore(linesGroup, plotLayer.firstChild);
    }
    var shownCount = 0;
    var xa = fl.xaxis, ya = fl.yaxis;
    var px = new Float64Array(S.density.length), py = new Float64Array(S.density.length);
    var seen = new Uint8Array(S.density.length);
    var d = [];
    for (var k = 0; k < classes.colours.length; k++) d.push([]);
    for (var q = 0; q < D.edgeClass.length; q++) {
      if (!edgeShown(q)) continue;
      shownCount++;
      var ea = D.edges[3 * q], eb = D.edges[3 * q + 1];
      if (!seen[ea]) { px[ea] = xa.l2p(S.density[ea]); py[ea] = ya.l2p(yOf(ea)); seen[ea] = 1; }
      if (!seen[eb]) { px[eb] = xa.l2p(S.density[eb]); py[eb] = ya.l2p(yOf(eb)); seen[eb] = 1; }
      d[D.edgeClass[q]].push('M' + px[ea].toFixed(1) + ',' + py[ea].toFixed(1) + 'L' + px[eb].toFixed(1) + ',' + py[eb].toFixed(1));
    }
    P.clear(linesGroup);
    d.forEach(function (segs, k) {
      if (segs.length === 0) return;
      var path = document.createElementNS('http://www.w3.org/2000/svg', 'path');
      path.setAttribute('d', segs.join(''));
      path.setAttribute('fill', 'none');
      path.setAttribute('stroke', classes.colours[k]);
      path.setAttribute('stroke-width', '1.2');
      path.setAttribute('stroke-opacity', '0.75');
      linesGroup.appendChild(path);
    });
    report.linesShown = shownCount;
    document.getElementById('line-count').textContent = shownCount + ' of ' + D.edgeClass.length + ' lines shown';
  }
  if (classes.colours.length > 0) {
    // The colour bar legend for the lines: an invisible point carrying the stepped colour scale.
    var bounds = classes.boundsAngstrom;
    report.traces.lineLegend = traces.length;
    traces.push({
      type: 'scatter', mode: 'markers', x: [null], y: [null], hoverinfo: 'skip', showlegend: false,
      marker: {
        color: [bounds[0], bounds[bounds.length - 1]], cmin: bounds[0], cmax: bounds[bounds.length - 1],
        colorscale: classes.colourscale, showscale: true,
        colorbar: {
          title: { text: 'EMD (Å)', side: 'right' }, thickness: 14, len: 0.75,
          tickvals: bounds, ticktext: classes.tickText,
        },
      },
    });
  }
  report.traces.duplicates = traces.length;
  traces.push({
    type: gl, mode: 'markers', name: 'Duplicates', visible: false,
    x: duplicates.map(function (i) { return S.density[i]; }),
    y: duplicates.map(yOf),
    text: duplicates.map(function (i) {
      return '<b>' + P.escapeForPlot(S.id[i]) + '</b> (duplicate)<br>of ' + P.escapeForPlot(S.id[S.keptIndex[i]]) +
        ', EMD ' + P.fmtDistance(S.distanceToKept[i]) + ' Å<br>' + energyText(i) + ', ' + P.fmt(S.density[i], 4) + ' g/cm³';
    }),
    hoverinfo: 'text',
    marker: { size: 5, symbol: 'circle-open', color: duplicates.map(function (i) { return familyColour(S.family[i]); }), opacity: 0.7 },
  });
  report.traces.kept = traces.length;
  traces.push({
    type: keptType, mode: 'markers', name: 'Kept structures',
    x: D.kept.map(function (i) { return S.density[i]; }),
    y: D.kept.map(yOf),
    text: D.kept.map(hoverText),
    hoverinfo: 'text',
    marker: {
      size: D.kept.map(function (i) { return markerSize(S.members[i]); }),
      color: D.kept.map(function (i) { return familyColour(S.family[i]); }),
      symbol: D.kept.map(function (i) { return familySymbol(S.family[i]); }),
      line: { color: '#ffffff', width: 0.6 },
      opacity: 0.92,
    },
  });

  // The selected structure is ringed by a layout shape of fixed pixel size: moving a shape redraws only
  // the shape, where restyling a trace would recompute every trace of a 10,000-point plot.
  function ring(x, y, radiusPx) {
    return {
      type: 'circle', xref: 'x', yref: 'y', xsizemode: 'pixel', ysizemode: 'pixel', xanchor: x, yanchor: y,
      x0: -radiusPx, x1: radiusPx, y0: -radiusPx, y1: radiusPx, layer: 'above', line: { color: '#111111', width: 2.5 },
    };
  }

  function hoverText(i) {
    var lines = ['<b>' + P.escapeForPlot(S.id[i]) + '</b>',
      'rel. energy ' + energyText(i) + ', density ' + P.fmt(S.density[i], 4) + ' g/cm³',
      P.escapeForPlot(symmetryText(i)),
      'family: ' + familyLabel(S.family[i]) + ', ' + S.members[i] + (S.members[i] === 1 ? ' member' : ' members')];
    if (S.cell[i]) lines.push(cellText(i) + (volumeText(i) ? '; V ' + volumeText(i) : ''));
    var nb = neighbours[i] || [];
    if (nb.length > 0) {
      lines.push('nearest: ' + nb.slice(0, 5).map(function (x) {
        return P.escapeForPlot(S.id[x[0]]) + ' (' + P.fmtDistance(x[1]) + ' Å)';
      }).join(', '));
    }
    return lines.join('<br>');
  }

  var zoom = D.view.zoom;
  var zoomed = zoom !== null;
  var landscapeLayout = P.baseLayout({
    xaxis: { title: { text: 'Density (g/cm³)' }, zeroline: false, gridcolor: '#e6eaee' },
    yaxis: { title: { text: hasEnergies ? 'Energy above the lowest (' + unit + ')' : 'No energies given (all at 0)' }, zeroline: false, gridcolor: '#e6eaee' },
    margin: { l: 70, r: 10, t: 10, b: 52 },
    shapes: [], annotations: [],
  });
  if (zoom) {
    landscapeLayout.xaxis.range = zoom.densityRange.slice();
    landscapeLayout.yaxis.range = zoom.energyRange.slice();
  }

  // Family legend (HTML): colour and symbol of each family with its size.
  var legend = document.getElementById('family-legend');
  legend.appendChild(el('span', { className: 'ps-legend-head' }, 'Families (kept structures):'));
  var shown = D.familySizes.slice(0, 40);
  shown.forEach(function (fs) {
    legend.appendChild(el('span', null,
      el('span', { className: 'ps-swatch', style: 'color:' + familyColour(fs[0]), 'aria-hidden': 'true' }, familyChar(fs[0])),
      familyLabel(fs[0]) + ' (' + fs[1] + ')'));
  });
  if (D.familySizes.length > shown.length) legend.appendChild(el('span', null, '… and ' + (D.familySizes.length - shown.length) + ' more families'));

  // ---- Line controls: how many lines per structure, and up to which EMD ----------------------------
  var rankSelect = document.getElementById('line-rank');
  var maxRank = 0;
  for (var r0 = 0; r0 < D.edgeRank.length; r0++) maxRank = Math.max(maxRank, D.edgeRank[r0]);
  for (var rk = 0; rk <= maxRank; rk++) {
    rankSelect.appendChild(el('option', { value: String(rk) },
      rk === 0 ? 'none' : rk === 1 ? '1 (nearest neighbour)' : rk === maxRank ? rk + ' (all stored)' : String(rk)));
  }
  rankSelect.value = String(Math.min(lineRank, maxRank));
  var slider = document.getElementById('line-max');
  var sliderOut = document.getElementById('line-max-value');
  var bLo = classes.boundsAngstrom.length ? classes.boundsAngstrom[0] : 0;
  var bHi = classes.boundsAngstrom.length ? classes.boundsAngstrom[classes.boundsAngstrom.length - 1] : 0;
  var SLIDER_STEPS = 100;
  slider.max = String(SLIDER_STEPS);
  // The slider starts at the first view's cut (the position at or above it), and reads "any EMD" at its end.
  slider.value = String(lineMaxAngstrom === Infinity || bHi <= bLo ? SLIDER_STEPS
    : Math.min(SLIDER_STEPS, Math.ceil(((lineMaxAngstrom - bLo) / (bHi - bLo)) * SLIDER_STEPS)));
  function sliderAngstrom() {
    var v = Number(slider.value);
    return v >= SLIDER_STEPS ? Infinity : bLo + ((bHi - bLo) * v) / SLIDER_STEPS;
  }
  function showSlider() {
    sliderOut.textContent = lineMaxAngstrom === Infinity ? 'any EMD' : P.fmtDistance(lineMaxAngstrom) + ' Å';
  }
  showSlider();
  function setLines() {
    lineRank = Number(rankSelect.value);
    lineMaxAngstrom = sliderAngstrom();
    showSlider();
    drawLines();
    if (report.traces.lineLegend !== undefined) Plotly.restyle(landscapeDiv, { visible: lineRank > 0 }, [report.traces.lineLegend]);
  }
  rankSelect.addEventListener('change', setLines);
  slider.addEventListener('input', setLines);
  if (D.edgeClass.length === 0) document.querySelector('.ps-line-controls').hidden = true;

  // ---- First view: the low-energy region, the whole landscape one click away --------------------
  var zoomButton = document.getElementById('zoom-toggle');
  var viewNote = document.getElementById('view-note');
  var lowText = D.view.lowWindow === null ? '' : P.fmtNumber(D.view.lowWindow) + ' ' + unit;
  function showViewState() {
    if (!zoom) {
      viewNote.hidden = true;
      return;
    }
    zoomButton.hidden = false;
    var outside = D.kept.length - D.view.inView;
    if (zoomed) {
      viewNote.textContent = 'Showing the ' + D.view.inView + ' kept structures within ' + lowText + ' of the lowest energy, where ' +
        'decisions are made (polymorph energy differences rarely exceed that; common practice); ' + outside +
        ' more lie outside this view.';
      zoomButton.textContent = 'Show the whole landscape';
    } else {
      viewNote.textContent = 'Showing the whole landscape: all ' + D.kept.length + ' kept structures.';
      zoomButton.textContent = 'Zoom to the lowest ' + lowText;
    }
  }
  function setZoom(on) {
    zoomed = on;
    showViewState();
    var upd = on
      ? { 'xaxis.range': zoom.densityRange.slice(), 'yaxis.range': zoom.energyRange.slice() }
      : { 'xaxis.autorange': true, 'yaxis.autorange': true };
    return Plotly.relayout(landscapeDiv, upd);
  }
  zoomButton.addEventListener('click', function () { setZoom(!zoomed); });
  report.setZoom = setZoom;
  showViewState();

  // ---- The pair energy/density windows would merge ----------------------------------------------
  var W = D.windows;
  var pairShapes = [], pairAnnotations = [];
  (function windowsNote() {
    if (!W) return;
    var note = document.getElementById('windows-note');
    note.hidden = false;
    note.appendChild(el('strong', null, 'What windows would lose: '));
    note.appendChild(document.createTextNode('energy/density windows (' + P.fmtNumber(W.energyWindow) + ' ' + unit + ', ' +
      W.densityWindowGPerCm3 + ' g/cm³) would leave ' + W.groups + ' groups of these ' + W.compared + ' distinct structures, folding ' +
      W.lost + ' of them into others.'));
    if (!W.example) return;
    var a = W.example.a, b = W.example.b;
    function times(i) { return S.members[i] === 1 ? 'once' : S.members[i] + ' times'; }
    note.appendChild(document.createTextNode(' For example they would merge '));
    note.appendChild(structureButton(a));
    note.appendChild(document.createTextNode(' and '));
    note.appendChild(structureButton(b));
    note.appendChild(document.createTextNode(' (' + (S.spaceGroup[a] === S.spaceGroup[b] ? 'both ' + (S.spaceGroup[a] || 'no space group') : (S.spaceGroup[a] || '–') + ' and ' + (S.spaceGroup[b] || '–')) +
      '; ' + P.fmt(S.energyRel[a], 2) + ' and ' + P.fmt(S.energyRel[b], 2) + ' ' + unit + '; ' + P.fmt(S.density[a], 3) + ' and ' +
      P.fmt(S.density[b], 3) + ' g/cm³; found ' + times(a) + ' and ' + times(b) + '), which are ' + P.fmtDistance(W.example.emdAngstrom) +
      ' Å apart, ' + W.example.toleranceMultiple.toFixed(1) + ' times the duplicate tolerance: two distinct structures. ' +
      'They are marked on the plot.'));
    pairShapes.push({ type: 'line', xref: 'x', yref: 'y', x0: S.density[a], y0: yOf(a), x1: S.density[b], y1: yOf(b), layer: 'above',
      line: { color: '#d55e00', width: 2.5, dash: 'dot' } });
    var right = S.density[b] >= S.density[a] ? b : a;
    pairAnnotations.push({ x: S.density[right], y: yOf(right), xref: 'x', yref: 'y', ax: 50, ay: -48, showarrow: true, arrowhead: 2,
      arrowcolor: '#d55e00', font: { color: '#a34400', size: 11 }, bgcolor: 'rgba(255,255,255,0.6)',
      text: 'windows merge ' + P.escapeForPlot(S.id[a]) + ' and ' + P.escapeForPlot(S.id[b]) + '<br>EMD ' + P.fmtDistance(W.example.emdAngstrom) + ' Å' });
    report.windowPair = [a, b];
  })();
  landscapeLayout.shapes = pairShapes.slice();
  landscapeLayout.annotations = pairAnnotations.slice();

  function onPlotClick(ev, plot) {
    if (!ev || !ev.points || ev.points.length === 0) return;
    var pt = ev.points[0];
    var idx = null;
    if (plot === 'landscape' && pt.curveNumber === report.traces.kept) idx = D.kept[pt.pointNumber];
    else if (plot === 'landscape' && pt.curveNumber === report.traces.duplicates) idx = S.keptIndex[duplicates[pt.pointNumber]];
    else if (plot === 'map' && pt.curveNumber === report.traces.mapKept) idx = D.kept[pt.pointNumber];
    if (idx !== null && idx !== undefined) select(idx, 'plot');
  }

  performance.mark('polysift:traces');
  Plotly.newPlot(landscapeDiv, traces, landscapeLayout, P.plotConfig).then(function () {
    performance.mark('polysift:landscape');
    drawLines();
    // Every redraw of the plot (zoom, pan, resize, restyle) moves the lines with the axes.
    landscapeDiv.on('plotly_afterplot', drawLines);
    landscapeDiv.on('plotly_click', function (ev) { onPlotClick(ev, 'landscape'); });
    // Ready once the frame holding the landscape has been produced: the library's promise resolves
    // before the browser has painted (measured: with WebGL traces the paint came seconds later).
    P.afterPaint(function () {
      performance.mark('polysift:painted');
      P.markReady('landscape');
      // The other panels draw after the landscape has been painted, so that it is not waiting for them.
      setTimeout(drawSecondary, 0);
    });
  });

  document.getElementById('show-duplicates').addEventListener('change', function (ev) {
    Plotly.restyle(landscapeDiv, { visible: ev.target.checked }, [report.traces.duplicates]);
  });

  // ---- Table of kept structures ----------------------------------------------------------------
  var keptTable = P.createTable({
    table: document.getElementById('kept-table'),
    items: D.kept,
    pageSize: 100,
    columns: [
      { label: 'Id', value: function (i) { return S.id[i]; }, text: function (i) { return S.id[i]; } },
      { label: 'Rel. energy (' + unit + ')', numeric: true, value: function (i) { return S.energyRel[i]; }, text: function (i) { return P.fmt(S.energyRel[i], 3); } },
      { label: 'Density (g/cm³)', numeric: true, value: function (i) { return S.density[i]; }, text: function (i) { return P.fmt(S.density[i], 4); } },
      { label: 'Members', numeric: true, value: function (i) { return S.members[i]; }, text: function (i) { return String(S.members[i]); } },
      { label: 'Family', numeric: true, value: function (i) { return S.family[i]; }, text: function (i) { return familyLabel(S.family[i]); } },
      { label: 'Nearest', value: function (i) { return S.nearestIndex[i] === null ? null : S.id[S.nearestIndex[i]]; }, text: function (i) { return S.nearestIndex[i] === null ? '–' : S.id[S.nearestIndex[i]]; } },
      { label: 'EMD to nearest (Å)', numeric: true, value: function (i) { return S.nearestDistance[i]; }, text: function (i) { return P.fmtDistance(S.nearestDistance[i]); } },
      { label: 'Space group', value: function (i) { return S.spaceGroup[i]; }, text: function (i) { return S.spaceGroup[i] === null ? '–' : S.spaceGroup[i]; } },
      { label: 'Z', numeric: true, value: function (i) { return S.z[i]; }, text: function (i) { return S.z[i] === null ? '–' : String(S.z[i]); } },
      { label: 'Z′', numeric: true, value: function (i) { return S.zPrime[i]; }, text: function (i) { return zPrimeText(i); } },
      { label: 'Flags', value: function (i) { return flagsOf(i); }, text: function (i) { return flagsOf(i) || '–'; } },
    ],
    filterInput: document.getElementById('table-filter'),
    filterText: function (i) {
      return [S.id[i], S.spaceGroup[i] || '', familyName(S.family[i]), source(i), S.sgDeclared[i] || '', S.writtenIn[i], flagsOf(i)].join(' | ');
    },
    // A query that is a space-group symbol in any common spelling ('P 21/c', 'P 1 21/c 1', 'P2_1/c', 'p21/c') or its
    // number (14) finds the structures of that group; any other query is looked for in the row's text.
    filterMatch: function (i, query, text) {
      var g = groupOfSpelling[query.replace(/\s+/g, ' ')];
      return g !== undefined ? S.sgNumber[i] === g : text.indexOf(query) >= 0;
    },
    countEl: document.getElementById('table-count'),
    prevButton: document.getElementById('kept-prev'),
    nextButton: document.getElementById('kept-next'),
    pageEl: document.getElementById('kept-page'),
    rowLabel: function (i) { return S.id[i] + ', ' + energyText(i); },
    onActivate: function (i) { select(i, 'table'); },
  });
  report.table = keptTable;

  // ---- Selection: marker, map, row and panel follow one structure ------------------------------
  function select(i, from) {
    report.selected = i;
    Plotly.relayout(landscapeDiv, { shapes: pairShapes.concat([ring(S.density[i], yOf(i), 13)]) });
    if (report.mapDrawn && keptPos[i] !== undefined) {
      var xy = D.embedding.coords[keptPos[i]];
      Plotly.relayout(mapDiv, { shapes: [ring(xy[0], xy[1], 11)] });
    }
    keptTable.reveal(i, from === 'table');
    showPanel(i);
  }
  report.select = select;

  var amdDiv = document.getElementById('amd-plot');
  document.getElementById('structure-panel').addEventListener('keydown', function (ev) {
    if (ev.key === 'Escape') document.getElementById('panel-close').click();
  });
  document.getElementById('panel-close').addEventListener('click', function () {
    document.getElementById('panel-body').hidden = true;
    document.getElementById('panel-empty').hidden = false;
    report.selected = null;
    Plotly.relayout(landscapeDiv, { shapes: pairShapes.slice() });
    if (report.mapDrawn) Plotly.relayout(mapDiv, { shapes: [] });
  });
  document.getElementById('amd-difference').addEventListener('change', function () {
    if (report.selected !== null) drawAmd(report.selected);
  });

  function structureButton(j) {
    return el('button', { type: 'button', className: 'ps-link', onclick: function () { select(j, 'panel'); } }, S.id[j]);
  }

  // What each flag of a structure points at, with the structures to look at as buttons.
  function flagsFact(i) {
    var codes = flagsOf(i);
    if (!codes) return 'none';
    var box = el('span');
    function line(text, j, after) {
      if (box.childNodes.length) box.appendChild(el('br'));
      box.appendChild(document.createTextNode(text));
      if (j !== null && j !== undefined) box.appendChild(structureButton(j));
      if (after) box.appendChild(document.createTextNode(after));
    }
    codes.split(' ').forEach(function (code) {
      if (code === 'other-chemistry') {
        var j = S.otherChemistryIndex[i];
        line('other-chemistry: ', j, ' (' + (D.formulas[S.composition[j]] || '?') + ') within ' + P.fmtDistance(S.otherChemistryDistance[i]) + ' Å');
      } else if (code === 'energy-mismatch') {
        line('energy-mismatch: ' + P.fmt(S.energyOffset[i], 3) + ' ' + unit + ' from its group\u2019s median energy', null, '');
      } else if (code === 'flat-minimum') {
        line('flat-minimum with ', null, '');
        (S.flatPartnerIndices[i] || []).forEach(function (j, k) {
          if (k > 0) box.appendChild(document.createTextNode(', '));
          box.appendChild(structureButton(j));
        });
      } else line(code, null, '');
    });
    return box;
  }

  function showPanel(i) {
    document.getElementById('panel-empty').hidden = true;
    document.getElementById('panel-body').hidden = false;
    document.getElementById('panel-id').textContent = S.id[i];
    var facts = P.clear(document.getElementById('panel-facts'));
    function fact(name, value) { facts.appendChild(el('dt', null, name)); facts.appendChild(el('dd', null, value)); }
    fact('Source', source(i));
    fact('File', D.files[S.file[i]]);
    fact('Block', blockOf(i) + ' (line ' + S.line[i] + ')');
    fact('Rel. energy', energyText(i));
    fact('Energy', S.energy[i] === null ? '–' : P.fmt(S.energy[i], 3) + ' ' + unit);
    fact('Density', P.fmt(S.density[i], 4) + ' g/cm³');
    fact('Family', familyLabel(S.family[i]));
    fact('Members', String(S.members[i]));
    fact('Space group', S.spaceGroup[i] === null ? '–' : S.spaceGroup[i] + (S.sgNumber[i] === null ? '' : ' (No. ' + S.sgNumber[i] + ')') +
      (S.sgDetected[i] === 1 ? ', detected within ' + D.parameters.symmetryToleranceAngstrom + ' Å' : S.sgDetected[i] === 0 ? ', as declared (see notes)' : ''));
    fact('Declared', S.sgDeclared[i] === null ? '–' : S.sgDeclared[i]);
    if (S.writtenIn[i]) fact('Members written in', S.writtenIn[i]);
    fact('Z / Z′', (S.z[i] === null ? '–' : String(S.z[i])) + ' / ' + zPrimeText(i));
    fact('Cell', cellText(i) || '–');
    fact('Volume', volumeText(i) || '–');
    fact('Atoms per cell', S.atoms[i] === null ? '–' : String(S.atoms[i]));
    fact('Formula', D.formulas[S.formula[i]] || '–');
    fact('Compared composition', D.formulas[S.composition[i]] || '–');
    fact('Flags', flagsFact(i));
    var nb = neighbours[i] || [];
    var nbList = el('span');
    nb.forEach(function (x, k) {
      if (k > 0) nbList.appendChild(document.createTextNode(', '));
      nbList.appendChild(structureButton(x[0]));
      nbList.appendChild(document.createTextNode(' (' + P.fmtDistance(x[1]) + ' Å)'));
    });
    fact('Nearest kept', nb.length ? nbList : '–');

    var mem = membersOf[i] || [];
    document.getElementById('members-note').textContent = mem.length === 0
      ? 'No duplicates: this structure was found once.'
      : mem.length + (mem.length === 1 ? ' duplicate' : ' duplicates') + ' collapsed into this structure, closest first.';
    var mbody = P.clear(document.getElementById('members-table').tBodies[0]);
    mem.slice(0, 500).forEach(function (j) {
      mbody.appendChild(el('tr', null,
        el('td', null, S.id[j]),
        el('td', { className: 'ps-num' }, P.fmtDistance(S.distanceToKept[j])),
        el('td', { className: 'ps-num' }, P.fmt(S.energyRel[j], 3)),
        // The block and line; the file too when it is not the kept structure's file.
        el('td', { className: 'ps-wrap', title: source(j) },
          (S.file[j] === S.file[i] ? blockOf(j) : source(j)) + ' (line ' + S.line[j] + ')'),
        el('td', null, flagsOf(j) ? flagsOf(j) + (S.energyOffset[j] !== null ? ' (' + P.fmt(S.energyOffset[j], 2) + ' ' + unit + ')' : '') : '–')));
    });
    if (mem.length > 500) mbody.appendChild(el('tr', null, el('td', { colspan: 5 }, '… ' + (mem.length - 500) + ' more (all are in structures.csv)')));
    var notes = P.clear(document.getElementById('panel-notes'));
    if (S.notes[i].length === 0) notes.appendChild(el('li', { className: 'ps-muted' }, 'none'));
    S.notes[i].forEach(function (n) { notes.appendChild(el('li', null, n)); });
    drawAmd(i);
  }

  function drawAmd(i) {
    if (!amdOf || amdRow[i] === undefined) {
      Plotly.purge(amdDiv);
      P.clear(amdDiv).appendChild(el('p', { className: 'ps-muted' }, 'No AMD stored for this structure.'));
      return;
    }
    var stale = amdDiv.querySelector(':scope > p');
    if (stale) amdDiv.removeChild(stale);
    var diff = document.getElementById('amd-difference').checked;
    var own = amdOf(amdRow[i]);
    var xs = [];
    for (var j = 0; j < own.length; j++) xs.push(j + 1);
    var curves = [];
    var nb = (neighbours[i] || []).slice(0, 5);
    nb.forEach(function (x) {
      if (amdRow[x[0]] === undefined) return;
      var other = amdOf(amdRow[x[0]]);
      var ys = [];
      for (var j = 0; j < other.length; j++) ys.push(diff ? other[j] - own[j] : other[j]);
      curves.push({
        type: 'scatter', mode: 'lines', x: xs, y: ys, name: P.escapeForPlot(S.id[x[0]]) + ' (' + P.fmtDistance(x[1]) + ' Å)',
        line: { width: 1.4, color: D.familyColours[curves.length % D.familyColours.length] },
        hovertemplate: '%{y:.4f} Å<extra>%{fullData.name}</extra>',
      });
    });
    var ownY = [];
    for (var j2 = 0; j2 < own.length; j2++) ownY.push(diff ? 0 : own[j2]);
    curves.push({
      type: 'scatter', mode: 'lines', x: xs, y: ownY, name: P.escapeForPlot(S.id[i]) + ' (this)',
      line: { width: 2.6, color: '#111111' }, hovertemplate: '%{y:.4f} Å<extra>%{fullData.name}</extra>',
    });
    Plotly.react(amdDiv, curves, P.baseLayout({
      margin: { l: 58, r: 8, t: 6, b: 96 },
      xaxis: { title: { text: 'neighbour j' }, gridcolor: '#e6eaee' },
      yaxis: { title: { text: diff ? 'AMD_j − this (Å)' : 'AMD_j (Å)' }, gridcolor: '#e6eaee' },
      showlegend: true,
      legend: { orientation: 'h', x: 0, xanchor: 'left', y: -0.3, yanchor: 'top', font: { size: 10 } },
    }), P.plotConfig);
  }

  // ---- Metric map, histogram, convergence, summary (drawn after the landscape) -----------------
  var mapDiv = document.getElementById('map-plot');

  function drawSecondary() {
    drawMap();
    drawHistogram();
    drawConvergence();
  }

  function drawMap() {
    var note = document.getElementById('map-note');
    var fold = document.getElementById('map-fold');
    if (!D.embedding || D.embedding.coords.length === 0) {
      note.textContent = 'This landscape holds no metric map (too few kept structures, or none was computed).';
      fold.hidden = true;
      return;
    }
    var q = D.mapQuality;
    var stressText = q && q.stress !== null ? 'Kruskal stress-1 ' + P.fmt(q.stress, 2) + ' (' + q.grade + '; 0.2 is poor, 0.1 fair, 0.05 good)' : 'no stress given';
    var trustText = q && q.trustworthiness !== null ? ', trustworthiness ' + P.fmt(q.trustworthiness, 2) +
      ' (the share of each structure\u2019s map neighbours that are near it under EMD too)' : '';
    note.textContent = 'Kept structures placed in 2D so that distances on the map follow their EMD (Å), to show which ones the metric ' +
      'puts together. How far to trust it: ' + stressText + trustText + '. Method: ' + D.embedding.method + '.';
    if (q && q.folded) {
      // A poor map is no finding: fold it, and draw it only when the reader asks.
      fold.open = false;
      document.getElementById('map-summary').textContent = 'Folded: with a stress this high the map\u2019s shapes can mislead ' +
        '(the EMDs do not fit in two dimensions). Show it anyway';
      var foldedText = document.getElementById('map-summary').textContent;
      fold.addEventListener('toggle', function () {
        document.getElementById('map-summary').textContent = fold.open ? 'Fold the map again (its stress is poor)' : foldedText;
        if (fold.open && !report.mapDrawn) plotMap();
      });
      report.mapFolded = true;
      return;
    }
    document.getElementById('map-summary').textContent = 'Map';
    plotMap();
  }

  function plotMap() {
    var em = D.embedding;
    var traces = [];
    report.traces.mapKept = 0;
    traces.push({
      type: P.scatterType(em.coords.length), mode: 'markers', name: 'Kept structures',
      x: em.coords.map(function (p) { return p[0]; }), y: em.coords.map(function (p) { return p[1]; }),
      text: D.kept.map(function (i) { return '<b>' + P.escapeForPlot(S.id[i]) + '</b><br>family: ' + familyLabel(S.family[i]) + ', ' + energyText(i); }),
      hoverinfo: 'text',
      marker: {
        size: 7, color: D.kept.map(function (i) { return familyColour(S.family[i]); }),
        symbol: D.kept.map(function (i) { return familySymbol(S.family[i]); }), line: { color: '#ffffff', width: 0.5 },
      },
    });
    var sel = report.selected !== null && keptPos[report.selected] !== undefined ? em.coords[keptPos[report.selected]] : null;
    Plotly.newPlot(mapDiv, traces, P.baseLayout({
      shapes: sel ? [ring(sel[0], sel[1], 11)] : [],
      xaxis: { title: { text: 'map x (Å)' }, zeroline: false, gridcolor: '#e6eaee' },
      yaxis: { title: { text: 'map y (Å)' }, zeroline: false, gridcolor: '#e6eaee', scaleanchor: 'x', scaleratio: 1 },
    }), P.plotConfig).then(function () {
      report.mapDrawn = true;
      mapDiv.on('plotly_click', function (ev) { onPlotClick(ev, 'map'); });
    });
  }

  function drawHistogram() {
    var h = D.nnHistogram;
    var div = document.getElementById('nn-plot');
    var tol = D.parameters.toleranceAngstrom;
    var noteBits = ['For every kept or duplicate structure, the EMD to its nearest other structure (Å, log scale). Optimiser noise sits left of the duplicate tolerance (dashed), distinct structures to its right.'];
    if (h.zeros > 0) noteBits.push(h.zeros + ' structures at distance exactly 0 cannot be shown on a log axis.');
    if (h.missing > 0) noteBits.push(h.missing + ' structures have no distance.');
    document.getElementById('nn-note').textContent = noteBits.join(' ');
    if (h.counts.length === 0) {
      div.appendChild(el('p', { className: 'ps-muted' }, 'No positive distances to show.'));
      return;
    }
    var e = h.edgesLog10;
    var xs = [], widths = [], text = [], colours = [];
    var tolLog = tol > 0 ? Math.log10(tol) : -Infinity;
    for (var k = 0; k < h.counts.length; k++) {
      xs.push((e[k] + e[k + 1]) / 2);
      widths.push(e[k + 1] - e[k]);
      text.push(P.fmtDistance(Math.pow(10, e[k])) + '–' + P.fmtDistance(Math.pow(10, e[k + 1])) + ' Å: ' + h.counts[k] + ' structures');
      colours.push(e[k + 1] <= tolLog + 1e-12 ? '#9a9a9a' : '#2c728e');
    }
    var lo = Math.floor(Math.min(e[0], tolLog > -Infinity ? tolLog : e[0]));
    var hi = Math.ceil(Math.max(e[e.length - 1], tolLog > -Infinity ? tolLog : e[0]));
    var shapes = [], annotations = [];
    // With --duplicate-tolerance auto: the gap it found (shaded) and the value it chose inside it.
    var tc = D.toleranceChoice;
    if (tc && tc.gapLowAngstrom !== null && tc.gapHighAngstrom !== null) {
      var g0 = Math.log10(tc.gapLowAngstrom), g1 = Math.log10(tc.gapHighAngstrom);
      lo = Math.min(lo, Math.floor(g0));
      hi = Math.max(hi, Math.ceil(g1));
      shapes.push({ type: 'rect', x0: g0, x1: g1, yref: 'paper', y0: 0, y1: 1, layer: 'below', line: { width: 0 }, fillcolor: tc.clear ? 'rgba(0,158,115,0.12)' : 'rgba(213,94,0,0.10)' });
      noteBits.push('Auto tolerance: the shaded band is the gap found between ' + P.fmtDistance(tc.gapLowAngstrom) + ' and ' +
        (tc.gapOpen ? 'at least ' : '') + P.fmtDistance(tc.gapHighAngstrom) + ' Å in the single-linkage distances (' + P.fmt(tc.gapDecades, 2) + ' decades)' +
        (tc.clear ? '; the tolerance sits at its middle on the log scale.' : '; it is too narrow to trust: ' + tc.warning) +
        (tc.closestKeptAngstrom !== null ? ' The closest two kept structures lie ' + P.fmtDistance(tc.closestKeptAngstrom) + ' Å apart.' : ''));
      document.getElementById('nn-note').textContent = noteBits.join(' ');
    } else if (tc && tc.warning) {
      noteBits.push('Auto tolerance: ' + tc.warning);
      document.getElementById('nn-note').textContent = noteBits.join(' ');
    }
    if (tolLog > -Infinity) {
      shapes.push({ type: 'line', x0: tolLog, x1: tolLog, yref: 'paper', y0: 0, y1: 1, line: { color: '#d55e00', width: 2, dash: 'dash' } });
      annotations.push({ x: tolLog, yref: 'paper', y: 1, text: 'tolerance ' + tol + ' Å' + (tc ? ' (auto)' : ''), showarrow: false, xanchor: 'left', yanchor: 'top', font: { color: '#a34400', size: 11 } });
    }
    var tickvals = [], ticktext = [];
    for (var dcd = lo; dcd <= hi; dcd++) { tickvals.push(dcd); ticktext.push(String(Number(Math.pow(10, dcd).toPrecision(1)))); }
    Plotly.newPlot(div, [{ type: 'bar', x: xs, y: h.counts, width: widths, text: text, hoverinfo: 'text', textposition: 'none', marker: { color: colours } }],
      P.baseLayout({
        bargap: 0.02,
        xaxis: { title: { text: 'EMD to the nearest other structure (Å, log scale)' }, tickvals: tickvals, ticktext: ticktext, range: [lo, hi], zeroline: false },
        yaxis: { title: { text: 'structures' }, gridcolor: '#e6eaee' },
        shapes: shapes, annotations: annotations,
      }), P.plotConfig);
  }

  function drawConvergence() {
    var cv = D.convergence;
    if (!cv || cv.points.length === 0) return;
    document.getElementById('convergence-section').hidden = false;
    var st = document.getElementById('convergence-statement');
    st.textContent = cv.statement;
    st.className = 'ps-statement ps-verdict-' + (cv.verdict || (cv.stillGrowing ? 'growing' : 'levelled-off'));
    var t = cv.tail;
    if (D.convergenceRule) document.getElementById('convergence-rule').textContent = D.convergenceRule + ' The shaded band is that last part.';
    var xs = cv.points.map(function (p) { return p.processed; });
    var palette = ['#440154', '#31688e', '#35b779', '#e69f00', '#cc79a7', '#0072b2'];
    var traces = cv.windows.map(function (w, k) {
      return {
        type: 'scatter', mode: 'lines', x: xs, y: cv.points.map(function (p) { return p.counts[k]; }),
        name: 'within ' + w + ' ' + unit, line: { width: k === 0 ? 3 : 2, color: palette[k % palette.length], shape: 'hv' },
      };
    });
    var n = xs[xs.length - 1];
    var shapes = [];
    if (t) {
      var from = n - t.candidates;
      shapes.push({ type: 'rect', xref: 'x', yref: 'paper', x0: from, x1: n, y0: 0, y1: 1, fillcolor: '#e0b24a', opacity: 0.15, line: { width: 0 }, layer: 'below' });
    }
    Plotly.newPlot(document.getElementById('convergence-plot'), traces, P.baseLayout({
      showlegend: true, legend: { orientation: 'h', y: 1.08 },
      xaxis: { title: { text: 'candidates processed (input order)' }, gridcolor: '#e6eaee' },
      yaxis: { title: { text: 'distinct kept structures' }, gridcolor: '#e6eaee', rangemode: 'tozero' },
      shapes: shapes,
      annotations: t ? [{ x: n, xanchor: 'right', xref: 'x', yref: 'paper', y: 0.02, yanchor: 'bottom', showarrow: false,
        text: 'last ' + Math.round(t.fraction * 100) + '%: ' + t.newWithinLowest + ' of ' + t.withinLowest + ' new within ' + cv.windows[0] + ' ' + unit,
        font: { size: 11, color: '#5b4a1a' } }] : [],
    }), P.plotConfig);
  }

  // ---- Run summary ------------------------------------------------------------------------------
  (function summary() {
    var st = document.getElementById('status-table').tBodies[0];
    [['input structures', c.input], ['kept', c.kept], ['duplicate', c.duplicate], ['rejected', c.rejected], ['outside the energy window', c.outsideWindow]]
      .forEach(function (r) { st.appendChild(el('tr', null, el('th', { scope: 'row' }, r[0]), el('td', { className: 'ps-num' }, String(r[1])))); });
    var ft = document.getElementById('flags-table').tBodies[0];
    [['other-chemistry', fc.otherChemistry, fc.otherChemistryPairs + ' pairs'], ['energy-mismatch', fc.energyMismatch, null],
      ['flat-minimum', fc.flatMinimum, fc.flatMinimumPairs + ' pairs']].forEach(function (r) {
      ft.appendChild(el('tr', { title: D.flagMeanings[r[0]] }, el('th', { scope: 'row' }, r[0]),
        el('td', { className: 'ps-num' }, String(r[1]) + (r[2] && r[1] ? ' (' + r[2] + ')' : '')), el('td', null, D.flagMeanings[r[0]])));
    });
    document.getElementById('flags-note').textContent = 'Flags mark what deserves a look; they never change which structures are kept. ' +
      'Filter the table of kept structures by a flag\u2019s name to list them; structures.csv has every row\u2019s flags.';
    var tt = document.getElementById('timings-table').tBodies[0];
    var stages = Object.keys(D.timingsSeconds || {});
    if (stages.length === 0) tt.appendChild(el('tr', null, el('td', null, 'not recorded')));
    stages.forEach(function (k) { tt.appendChild(el('tr', null, el('th', { scope: 'row' }, k), el('td', { className: 'ps-num' }, P.fmt(D.timingsSeconds[k], 2) + ' s'))); });
    document.getElementById('tool-line').textContent = 'Made with ' + D.tool.name + ' ' + D.tool.version + ' on ' + D.createdAt + '.';
    var pl = document.getElementById('parameters-list');
    var pr = D.parameters;
    var names = {
      k: 'PDD depth k', hydrogens: 'Hydrogens', toleranceAngstrom: 'Duplicate tolerance (Å)', toleranceMode: 'Tolerance chosen',
      symmetryToleranceAngstrom: 'Symmetry tolerance (Å)',
      elementCheck: 'Element-aware check', energyMismatch: 'Energy mismatch (' + unit + ')', flatEnergy: 'Flat minimum: energy (' + unit + ')',
      flatDensityGPerCm3: 'Flat minimum: density (g/cm³)', minFamilySize: 'Minimum family size',
      minSamples: 'Minimum samples', energyWindow: 'Energy window (' + unit + ')', energyUnit: 'Energy unit',
      energyBasis: 'Energies given per (a cell: divided by each structure\'s Z)',
      neighbours: 'Neighbours per structure', inputs: 'Inputs', energiesFile: 'Energies file', energyItem: 'Energy data item',
    };
    Object.keys(pr).forEach(function (k) {
      var v = pr[k];
      var text = v === null ? 'none' : Array.isArray(v) ? v.join(', ') : String(v);
      pl.appendChild(el('dt', null, names[k] || k));
      pl.appendChild(el('dd', null, text));
    });
    var rejected = [];
    for (var i = 0; i < S.id.length; i++) if (S.status[i] === REJECTED) rejected.push(i);
    document.getElementById('rejected-note').textContent = rejected.length === 0
      ? 'None: every input structure could be used.'
      : rejected.length + ' structures could not be used; each reason says what to fix.';
    if (rejected.length === 0) { document.getElementById('rejected-box').hidden = true; return; }
    report.rejectedTable = P.createTable({
      table: document.getElementById('rejected-table'),
      items: rejected,
      pageSize: 50,
      columns: [
        { label: 'Id', value: function (i) { return S.id[i]; }, text: function (i) { return S.id[i]; } },
        { label: 'Source', wrap: true, value: function (i) { return source(i); }, text: function (i) { return source(i); } },
        { label: 'Line', numeric: true, value: function (i) { return S.line[i]; }, text: function (i) { return String(S.line[i]); } },
        { label: 'Reason', wrap: true, value: function (i) { return S.reason[i]; }, text: function (i) { return S.reason[i]; } },
      ],
      prevButton: document.getElementById('rejected-prev'),
      nextButton: document.getElementById('rejected-next'),
      pageEl: document.getElementById('rejected-page'),
    });
  })();
})();
