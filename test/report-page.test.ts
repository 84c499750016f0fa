// The report's page machinery without a browser: escaping, the colour scale, the histogram, the page data
// and the assembled HTML. Browser behaviour is in report-browser.test.ts.
import { describe, expect, it } from 'vitest';
import { numpy } from './helpers/numpy.js';
import { readFileSync } from 'node:fs';
import { runInNewContext } from 'node:vm';
import { escapeHtml, inlineScriptSource, jsonForScript } from '../src/report/escape.js';
import { colourAt, colourClasses, stepColourscale, VIRIDIS_STOPS } from '../src/report/colours.js';
import { logHistogram } from '../src/report/log-histogram.js';
import { AMD_STEP_ANGSTROM, buildEdgeClasses, buildSiftPageData, edgeClassOf, EDGE_CLASSES, packAmd, unpackAmdRow } from '../src/report/sift-data.js';
import { renderSiftReport, LANDSCAPE_CAUTION } from '../src/report/sift-report.js';
import { plotlyBundlePath, readPlotlyBundle } from '../src/report/assets.js';
import { PAGE_DATA_ID } from '../src/report/page.js';
import { renameStructures, syntheticLandscape } from './helpers/synthetic-landscape.js';

const HOSTILE = [
  'x</script><script>alert(1)</script>',
  '<img src=x onerror=alert(1)>',
  `it's "quoted"`,
  '&amp;',
  '<!--<script>',
  'line\u2028separator\u2029end',
];

function embeddedData(html: string): unknown {
  const open = `<script type="application/json" id="${PAGE_DATA_ID}">`;
  const start = html.indexOf(open);
  expect(start).toBeGreaterThan(0);
  const end = html.indexOf('</script>', start);
  return JSON.parse(html.slice(start + open.length, end));
}

describe('escaping', () => {
  it('escapes the five HTML-special characters (HTML Living Standard, named character references)', () => {
    expect(escapeHtml(`<a href="x" title='y'>&</a>`)).toBe('&lt;a href=&quot;x&quot; title=&#39;y&#39;&gt;&amp;&lt;/a&gt;');
  });

  it('JSON for a script element contains no <, >, & or line separators and parses back to the same value', () => {
    const value = { ids: HOSTILE, nested: { s: HOSTILE.join('|') } };
    const text = jsonForScript(value);
    expect(text).not.toMatch(/[<>&\u2028\u2029]/);
    expect(JSON.parse(text)).toEqual(value);
  });

  it('an inlined script cannot close its element and still computes the same values', () => {
    const src = `var out = ["</script>", "<!--", '</SCRIPT >', /<\\/script>/.test("</script>"), \`<!--x</script>\`];`;
    const safe = inlineScriptSource(src);
    expect(safe.toLowerCase()).not.toContain('</script');
    expect(safe).not.toContain('<!--');
    const a = runInNewContext(`${src}; out`) as unknown[];
    const b = runInNewContext(`${safe}; out`) as unknown[];
    expect(b).toEqual(a);
  });

  it('the installed plotting library has no sequence that would end or confuse its inline script element', () => {
    const src = inlineScriptSource(readPlotlyBundle());
    expect(src.toLowerCase()).not.toContain('</script');
    expect(src).not.toContain('<!--');
  });
});

describe('colours', () => {
  it('the viridis control points are those shipped in the installed plotly.js bundle (its `Viridis` scale)', () => {
    const bundle = readFileSync(plotlyBundlePath(), 'utf8');
    const m = /Viridis:(\[\[[^\]]*\](?:,\[[^\]]*\])*\])/.exec(bundle);
    expect(m, 'Viridis scale not found in the plotly bundle').not.toBeNull();
    const shipped = JSON.parse(m![1]!.replace(/\[\./g, '[0.')) as Array<[number, string]>;
    expect(shipped.length).toBe(VIRIDIS_STOPS.length);
    shipped.forEach(([p, c], i) => {
      expect(VIRIDIS_STOPS[i]![0]).toBeCloseTo(p, 12);
      expect(VIRIDIS_STOPS[i]![1]).toBe(c);
    });
  });

  it('viridis runs from #440154 to #fde725 with #21918c at its middle sample (matplotlib _viridis_data entries 0, 255, 128; from memory, and as the bundle ships them)', () => {
    expect(colourAt(VIRIDIS_STOPS, 0)).toBe('#440154');
    expect(colourAt(VIRIDIS_STOPS, 1)).toBe('#fde725');
    expect(colourAt(VIRIDIS_STOPS, 128 / 255)).toBe('#21918c');
    expect(colourAt(VIRIDIS_STOPS, -3)).toBe('#440154');
    expect(colourAt(VIRIDIS_STOPS, 7)).toBe('#fde725');
  });

  it('between two control points colours are the linear sRGB interpolation', () => {
    // Halfway between #440154 (68,1,84) and #48186a (72,24,106): (70, 12.5, 95) -> rounded (70, 13, 95).
    expect(colourAt(VIRIDIS_STOPS, 8 / 255)).toBe('#460d5f');
  });

  it('class colours get lighter from first to last (viridis lightness rises monotonically by design)', () => {
    const luminance = (hex: string) => {
      const v = [1, 3, 5].map((o) => parseInt(hex.slice(o, o + 2), 16));
      return 0.2126 * v[0]! + 0.7152 * v[1]! + 0.0722 * v[2]!; // ITU-R BT.709 weights
    };
    const cls = colourClasses(VIRIDIS_STOPS, 8);
    for (let i = 1; i < cls.length; i++) expect(luminance(cls[i]!)).toBeGreaterThan(luminance(cls[i - 1]!));
  });

  it('a stepped colour scale holds each class colour over exactly its band', () => {
    const s = stepColourscale(['#000000', '#ffffff']);
    expect(s).toEqual([[0, '#000000'], [0.5, '#000000'], [0.5, '#ffffff'], [1, '#ffffff']]);
  });
});

describe('nearest-neighbour histogram on a log axis', () => {
  it('counts equal numpy.histogram of log10(values) over the same edges', () => {
    const values: Array<number | null> = [];
    let s = 7;
    for (let i = 0; i < 3000; i++) {
      s = (s * 16807) % 2147483647; // Park–Miller minimal standard generator (CACM 1988)
      values.push(Math.pow(10, -3.5 + 4 * (s / 2147483647)));
    }
    values.push(0, 0, null, -1, 0.01, 0.1, 1);
    const h = logHistogram(values, 10);
    expect(h.zeros).toBe(2);
    expect(h.missing).toBe(2);
    const ref = numpy(
      'v=np.array([x for x in d["v"] if x is not None and x>0]); c,_=np.histogram(np.log10(v), bins=np.array(d["e"])); print(json.dumps(c.tolist()))',
      { v: values, e: h.edgesLog10 },
    ) as number[];
    expect(h.counts).toEqual(ref);
    expect(h.counts.reduce((a, b) => a + b, 0)).toBe(values.length - 4);
  });

  it('no positive value gives an empty histogram that still reports zeros and missing ones', () => {
    expect(logHistogram([0, null, 0], 10)).toEqual({ edgesLog10: [], counts: [], zeros: 2, missing: 1 });
  });
});

describe('page data of the sift report', () => {
  const land = syntheticLandscape({ kept: 400, seed: 5 });
  const data = buildSiftPageData(land, 'test');

  it('keeps one column entry per structure with the landscape values', () => {
    expect(data.s.id.length).toBe(land.structures.length);
    land.structures.forEach((r, i) => {
      expect(data.s.id[i]).toBe(r.id);
      expect(data.files[data.s.file[i]!]! + '#' + (data.s.block[i] ?? data.s.id[i])).toBe(r.source);
      expect(data.statusCodes[data.s.status[i]!]).toBe(r.status);
      if (r.energyRel === null) expect(data.s.energyRel[i]).toBeNull();
      else expect(data.s.energyRel[i]).toBeCloseTo(r.energyRel, 4);
      expect(data.s.keptIndex[i]).toBe(r.keptIndex);
      expect(data.s.members[i]).toBe(r.members);
    });
    expect(data.kept).toEqual(land.kept);
  });

  it('bins the neighbourhood lines into EMD classes as numpy.digitize does with the same bounds', () => {
    // Round bounds (issue 14): at most EDGE_CLASSES classes, each used by the data at its ends.
    const classes = data.edgeClasses.boundsAngstrom.length - 1;
    expect(classes).toBeGreaterThanOrEqual(2);
    expect(classes).toBeLessThanOrEqual(EDGE_CLASSES);
    const d = land.edges.map((e) => e[2]);
    const inner = data.edgeClasses.boundsAngstrom.slice(1, -1);
    const ref = numpy('print(json.dumps(np.digitize(np.array(d["d"]), np.array(d["b"])).tolist()))', { d, b: inner }) as number[];
    expect(data.edgeClass).toEqual(ref);
    expect(Math.min(...data.edgeClass)).toBe(0);
    expect(Math.max(...data.edgeClass)).toBe(classes - 1);
  });

  it('one edge length gives one class; no edges give none', () => {
    const one = buildEdgeClasses(0.3, 0.3);
    expect(one.colours.length).toBe(1);
    expect(edgeClassOf(0.3, one.boundsAngstrom)).toBe(0);
    expect(buildEdgeClasses(Infinity, -Infinity).colours).toEqual([]);
  });

  it('packs the AMD rows on a 1e-4 Å grid (2 bytes a value) that decodes to within half a step', () => {
    const amd = data.amd!;
    expect(amd.encoding).toBe('u16-delta');
    expect(Buffer.from(amd.base64, 'base64').length).toBe(amd.index.length * amd.k * 2);
    land.invariants.kept.forEach((row, r) => {
      expect(amd.index[r]).toBe(row.index);
      const back = unpackAmdRow(amd, r);
      for (let j = 0; j < amd.k; j++) expect(Math.abs(back[j]! - row.amd[j]!)).toBeLessThanOrEqual(AMD_STEP_ANGSTROM / 2 + 1e-12);
    });
  });

  it('falls back to Float32 when an AMD value does not fit the grid, and decodes it to Float32 precision', () => {
    const odd = syntheticLandscape({ kept: 10, seed: 3 });
    odd.invariants.kept[2]!.amd[0] = 7.5; // first value above 65535 steps of 1e-4 Å
    const packed = packAmd(odd)!;
    expect(packed.encoding).toBe('f32');
    odd.invariants.kept.forEach((row, r) => {
      const back = unpackAmdRow(packed, r);
      for (let j = 0; j < packed.k; j++) expect(back[j]).toBeCloseTo(row.amd[j]!, 5);
    });
  });

  it('refuses a landscape whose kept list names a non-kept structure', () => {
    const bad = syntheticLandscape({ kept: 20, seed: 2 });
    const dup = bad.structures.find((r) => r.status === 'duplicate')!;
    bad.kept.push(dup.index);
    expect(() => buildSiftPageData(bad, 't')).toThrow(/not a kept structure/);
  });
});

describe('the report HTML', () => {
  const land = renameStructures(
    syntheticLandscape({ kept: 60, seed: 9 }),
    HOSTILE.map((h, i) => ({ at: i, id: h, block: `blk-${h}`, file: `dir/${h}.cif` })),
  );
  const html = renderSiftReport(land, { title: 'Run <b>A</b> & "B"' });

  it('loads nothing from outside the file: no src or href attributes, no URL schemes that fetch', () => {
    expect(html).not.toMatch(/<(script|link|img|iframe)[^>]*\s(src|href)\s*=/i);
    expect(html).toMatch(/<meta http-equiv="Content-Security-Policy" content="default-src &#39;none&#39;/);
  });

  it('holds no input string raw: hostile ids, blocks and file names appear only escaped', () => {
    for (const h of HOSTILE.slice(0, 2)) expect(html).not.toContain(h);
    expect(html).not.toContain('<b>A</b>');
    expect(html).toContain('<title>Run &lt;b&gt;A&lt;/b&gt; &amp; &quot;B&quot;</title>');
    // Only our own script elements: the library, the shared helpers, the page script and the data.
    expect((html.match(/<script/gi) ?? []).length).toBe(4);
  });

  it('embeds the page data so that it parses back to the landscape strings, hostile ones included', () => {
    const data = embeddedData(html) as { s: { id: string[]; block: Array<string | null> }; files: string[] };
    HOSTILE.forEach((h, i) => {
      expect(data.s.id[i]).toBe(h);
      expect(data.s.block[i]).toBe(`blk-${h}`);
      expect(data.files).toContain(`dir/${h}.cif`);
    });
  });

  it('carries the caution in the page', () => {
    expect(html).toContain(escapeHtml(LANDSCAPE_CAUTION));
  });
});
