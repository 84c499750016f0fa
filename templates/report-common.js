/* Page helpers shared by polysift's report pages (window.PolysiftPage).
 * Every string that came from input reaches the page through textContent or, for plot labels, through
 * escapeForPlot (the plotting library renders a subset of HTML in hover text and labels). */
(function () {
  'use strict';

  var readyParts = {};

  /** The page's data from its inert JSON element. */
  function readData(id) {
    var node = document.getElementById(id || 'polysift-data');
    if (!node) throw new Error('polysift report: the page data is missing');
    return JSON.parse(node.textContent);
  }

  /** Text for plot hover labels, legends and annotations: the library reads a few tags and decodes
   * entities in them, so markup characters become entities it decodes back to text (it does not know
   * &quot;, hence the numeric forms for quotes). */
  function escapeForPlot(text) {
    return String(text).replace(/[&<>"']/g, function (c) {
      return c === '&' ? '&amp;' : c === '<' ? '&lt;' : c === '>' ? '&gt;' : c === '"' ? '&#34;' : '&#39;';
    });
  }

  /** Create an element; string children become text nodes, never markup. */
  function el(tag, attrs) {
    var node = document.createElement(tag);
    if (attrs) {
      Object.keys(attrs).forEach(function (k) {
        var v = attrs[k];
        if (v === null || v === undefined || v === false) return;
        if (k === 'className') node.className = v;
        else if (k === 'text') node.textContent = String(v);
        else if (k.slice(0, 2) === 'on' && typeof v === 'function') node.addEventListener(k.slice(2), v);
        else node.setAttribute(k, v === true ? '' : String(v));
      });
    }
    for (var i = 2; i < arguments.length; i++) append(node, arguments[i]);
    return node;
  }

  function append(node, child) {
    if (child === null || child === undefined || child === false) return;
    if (Array.isArray(child)) child.forEach(function (c) { append(node, c); });
    else if (typeof child === 'object' && child.nodeType) node.appendChild(child);
    else node.appendChild(document.createTextNode(String(child)));
  }

  function clear(node) {
    while (node.firstChild) node.removeChild(node.firstChild);
    return node;
  }

  /** A number with a fixed count of decimals, or an en dash when missing. */
  function fmt(x, decimals) {
    if (x === null || x === undefined || typeof x !== 'number' || !isFinite(x)) return '–';
    var t = x.toFixed(decimals === undefined ? 3 : decimals);
    // A value that rounds to zero prints without a sign ("0.0000", not "-0.0000").
    return /^-0(\.0*)?$/.test(t) ? t.slice(1) : t;
  }

  /** The shortest plain form of a number (at most 6 significant digits): 10, 2.39, 0.5. */
  function fmtNumber(x) {
    if (x === null || x === undefined || typeof x !== 'number' || !isFinite(x)) return '–';
    return String(Number(x.toPrecision(6)));
  }

  /** A distance in Å with enough digits for small values (optimiser noise is thousandths of an Å). */
  function fmtDistance(x) {
    if (x === null || x === undefined || !isFinite(x)) return '–';
    if (x === 0) return '0';
    var a = Math.abs(x);
    if (a >= 0.1) return x.toFixed(3);
    return x.toPrecision(3);
  }

  var webgl = null;
  /** Whether this browser can draw WebGL plots; without it the page falls back to SVG traces. */
  function hasWebGL() {
    if (webgl === null) {
      try {
        var c = document.createElement('canvas');
        webgl = !!(window.WebGLRenderingContext && (c.getContext('webgl') || c.getContext('experimental-webgl')));
      } catch (e) {
        webgl = false;
      }
    }
    return webgl;
  }

  /** Trace type for point clouds: WebGL for large sets when available. */
  function scatterType(points) {
    return points > 400 && hasWebGL() ? 'scattergl' : 'scatter';
  }

  /**
   * Rows of k packed values (src/report/sift-data.ts packAmd): `f32` is little-endian Float32,
   * `u16-delta` little-endian Uint16 differences on a grid of `step`. Returns row(r) -> Float64Array;
   * the base64 text is decoded on first use.
   */
  function packedRows(base64, k, encoding, step) {
    var view = null;
    return function (r) {
      if (view === null) {
        var bin = atob(base64);
        var bytes = new Uint8Array(bin.length);
        for (var i = 0; i < bin.length; i++) bytes[i] = bin.charCodeAt(i);
        view = new DataView(bytes.buffer);
      }
      var out = new Float64Array(k);
      if (encoding === 'f32') {
        for (var j = 0; j < k; j++) out[j] = view.getFloat32((r * k + j) * 4, true);
      } else {
        var q = 0;
        for (var j2 = 0; j2 < k; j2++) {
          q += view.getUint16((r * k + j2) * 2, true);
          out[j2] = q * step;
        }
      }
      return out;
    };
  }

  /** Plot settings shared by every plot: nothing links outside the file. */
  var plotConfig = {
    displaylogo: false,
    responsive: true,
    scrollZoom: false,
    modeBarButtonsToRemove: ['lasso2d', 'select2d'],
    toImageButtonOptions: { format: 'png', scale: 2 },
    // WebGL canvases at the screen's own pixel ratio (the library's default of 2 quadruples the pixels
    // to fill on ordinary screens, and costs seconds where WebGL runs in software).
    plotGlPixelRatio: Math.max(1, Math.min(2, window.devicePixelRatio || 1)),
  };

  function baseLayout(extra) {
    var layout = {
      margin: { l: 64, r: 24, t: 12, b: 52 },
      hovermode: 'closest',
      paper_bgcolor: '#ffffff',
      plot_bgcolor: '#fbfcfd',
      font: { family: 'system-ui, -apple-system, Segoe UI, Roboto, Arial, sans-serif', size: 12, color: '#1d2430' },
      showlegend: false,
      hoverlabel: { align: 'left' },
    };
    if (extra) Object.keys(extra).forEach(function (k) { layout[k] = extra[k]; });
    return layout;
  }

  /** Record that a part of the page has drawn; `window.polysiftReady` turns true when all named parts have. */
  function markReady(part) {
    readyParts[part] = true;
    var all = true;
    Object.keys(readyParts).forEach(function (k) { if (!readyParts[k]) all = false; });
    window.polysiftReadyParts = readyParts;
    if (all && !window.polysiftReady) {
      // Milliseconds since navigation started, read by the report benchmark.
      window.polysiftReadyAtMs = performance.now();
      window.polysiftReady = true;
      document.documentElement.setAttribute('data-ready', 'true');
    }
  }

  /** Run fn after the next frame has been produced (a task queued from an animation frame callback runs
   * after that frame's rendering). */
  function afterPaint(fn) {
    requestAnimationFrame(function () { setTimeout(fn, 0); });
  }

  function expectReady(part) {
    readyParts[part] = false;
  }

  /**
   * A sortable, filterable, paged table over items (numbers). Header buttons sort (click, Enter, Space;
   * aria-sort tells the order); rows are focusable: Enter or Space activates, arrow keys, Home and End move.
   *   opts.table, opts.columns [{label, numeric, wrap, value(item), text(item), cell(item) optional}],
   *   opts.items, opts.pageSize, opts.filterInput, opts.filterText(item), opts.countEl,
   *   opts.filterMatch(item, query, text) optional (default: the query is a substring of filterText),
   *   opts.prevButton, opts.nextButton, opts.pageEl, opts.onActivate(item), opts.rowLabel(item)
   */
  function createTable(opts) {
    var table = opts.table;
    var headRow = table.tHead.rows[0];
    var body = table.tBodies[0];
    var columns = opts.columns;
    var items = opts.items.slice();
    var pageSize = opts.pageSize || 100;
    var order = items.slice();
    var view = order;
    var page = 0;
    var sortCol = -1;
    var sortDir = 1;
    var selected = null;
    var filterIndex = null;
    var query = '';

    clear(headRow);
    var headers = columns.map(function (col, c) {
      var th = el('th', { scope: 'col', className: col.numeric ? 'ps-num' : null, 'aria-sort': 'none' });
      var b = el('button', { type: 'button', text: col.label, title: 'Sort by ' + col.label });
      b.addEventListener('click', function () { sortBy(c, sortCol === c ? -sortDir : 1); });
      th.appendChild(b);
      headRow.appendChild(th);
      return th;
    });

    function compare(a, b) {
      var col = columns[sortCol];
      var va = col.value(a), vb = col.value(b);
      var na = va === null || va === undefined || (typeof va === 'number' && !isFinite(va));
      var nb = vb === null || vb === undefined || (typeof vb === 'number' && !isFinite(vb));
      // Missing values go last in either direction; ties keep the original order.
      if (na || nb) return na && nb ? a - b : na ? 1 : -1;
      var d = typeof va === 'number' && typeof vb === 'number' ? va - vb : String(va).localeCompare(String(vb), undefined, { numeric: true });
      return d !== 0 ? d * sortDir : position[a] - position[b];
    }

    var position = {};
    items.forEach(function (it, p) { position[it] = p; });

    function sortBy(c, dir) {
      sortCol = c;
      sortDir = dir;
      headers.forEach(function (th, i) {
        th.setAttribute('aria-sort', i === c ? (dir > 0 ? 'ascending' : 'descending') : 'none');
      });
      order = items.slice().sort(compare);
      // A new order starts on its first page, so the top of the sort is what the reader sees.
      applyFilter(true);
    }

    function applyFilter(resetPage) {
      if (!query) view = order;
      else {
        if (filterIndex === null) {
          filterIndex = {};
          items.forEach(function (it) { filterIndex[it] = String(opts.filterText(it)).toLowerCase(); });
        }
        view = order.filter(function (it) {
          return opts.filterMatch ? opts.filterMatch(it, query, filterIndex[it]) : filterIndex[it].indexOf(query) >= 0;
        });
      }
      if (resetPage !== false) page = 0;
      page = Math.min(page, Math.max(0, Math.ceil(view.length / pageSize) - 1));
      render();
    }

    function render() {
      clear(body);
      var start = page * pageSize;
      var end = Math.min(view.length, start + pageSize);
      var frag = document.createDocumentFragment();
      // One row is in the tab order (the selected one when it is on this page, else the first);
      // arrow keys move between rows.
      var onPage = view.slice(start, end);
      var tabItem = onPage.indexOf(selected) >= 0 ? selected : onPage[0];
      for (var p = start; p < end; p++) frag.appendChild(makeRow(view[p], view[p] === tabItem));
      body.appendChild(frag);
      var pages = Math.max(1, Math.ceil(view.length / pageSize));
      if (opts.pageEl) opts.pageEl.textContent = view.length === 0 ? 'no rows' : 'rows ' + (start + 1) + '–' + end + ' of ' + view.length + ' (page ' + (page + 1) + ' of ' + pages + ')';
      if (opts.prevButton) opts.prevButton.disabled = page === 0;
      if (opts.nextButton) opts.nextButton.disabled = page >= pages - 1;
      if (opts.countEl) opts.countEl.textContent = query ? view.length + ' of ' + items.length + ' match' : items.length + ' rows';
    }

    function makeRow(it, inTabOrder) {
      var tr = el('tr', { 'data-item': it });
      if (opts.onActivate) {
        tr.tabIndex = inTabOrder ? 0 : -1;
        tr.setAttribute('aria-selected', it === selected ? 'true' : 'false');
        if (opts.rowLabel) tr.setAttribute('aria-label', opts.rowLabel(it));
      }
      columns.forEach(function (col) {
        var td = el('td', { className: col.numeric ? 'ps-num' : col.wrap ? 'ps-wrap' : null });
        if (col.cell) append(td, col.cell(it));
        else td.textContent = col.text(it);
        tr.appendChild(td);
      });
      return tr;
    }

    if (opts.onActivate) {
      body.addEventListener('click', function (ev) {
        var tr = ev.target.closest('tr[data-item]');
        if (!tr || ev.target.closest('button')) return;
        opts.onActivate(Number(tr.getAttribute('data-item')));
      });
      body.addEventListener('keydown', function (ev) {
        var tr = ev.target.closest && ev.target.closest('tr[data-item]');
        if (!tr || ev.target !== tr) return;
        if (ev.key === 'Enter' || ev.key === ' ') {
          ev.preventDefault();
          opts.onActivate(Number(tr.getAttribute('data-item')));
        } else if (ev.key === 'ArrowDown' || ev.key === 'ArrowUp') {
          ev.preventDefault();
          var next = ev.key === 'ArrowDown' ? tr.nextElementSibling : tr.previousElementSibling;
          if (next) moveFocus(tr, next);
        } else if (ev.key === 'Home' || ev.key === 'End') {
          ev.preventDefault();
          var edge = ev.key === 'Home' ? body.firstElementChild : body.lastElementChild;
          if (edge) moveFocus(tr, edge);
        }
      });
    }
    function moveFocus(from, to) {
      from.tabIndex = -1;
      to.tabIndex = 0;
      to.focus();
    }

    if (opts.prevButton) opts.prevButton.addEventListener('click', function () { if (page > 0) { page--; render(); } });
    if (opts.nextButton) opts.nextButton.addEventListener('click', function () { if ((page + 1) * pageSize < view.length) { page++; render(); } });
    if (opts.filterInput) {
      var timer = null;
      opts.filterInput.addEventListener('input', function () {
        clearTimeout(timer);
        timer = setTimeout(function () {
          query = opts.filterInput.value.trim().toLowerCase();
          applyFilter(true);
        }, 120);
      });
    }

    /** Mark an item selected and bring its row into view (clearing a filter that hides it). */
    function reveal(it, focusRow) {
      selected = it;
      var p = view.indexOf(it);
      if (p < 0 && query) {
        query = '';
        if (opts.filterInput) opts.filterInput.value = '';
        view = order;
        p = view.indexOf(it);
      }
      if (p >= 0) page = Math.floor(p / pageSize);
      render();
      var tr = body.querySelector('tr[data-item="' + it + '"]');
      if (tr) {
        tr.scrollIntoView({ block: 'nearest' });
        if (focusRow) tr.focus({ preventScroll: true });
      }
    }

    render();
    return {
      sortBy: sortBy,
      reveal: reveal,
      visibleItems: function () { return view.slice(); },
      pageItems: function () { return view.slice(page * pageSize, (page + 1) * pageSize); },
    };
  }

  window.PolysiftPage = {
    readData: readData,
    escapeForPlot: escapeForPlot,
    el: el,
    clear: clear,
    fmt: fmt,
    fmtDistance: fmtDistance,
    fmtNumber: fmtNumber,
    hasWebGL: hasWebGL,
    scatterType: scatterType,
    packedRows: packedRows,
    plotConfig: plotConfig,
    baseLayout: baseLayout,
    markReady: markReady,
    afterPaint: afterPaint,
    expectReady: expectReady,
    createTable: createTable,
  };
})();
