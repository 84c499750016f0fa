// Headless Chromium for the report tests. Launching and opening a file live beside the report benchmark
// (src/bench/_browser.ts), which needs them from built code too; the page actions below are test-only.
import type { Page } from 'playwright-core';

export { launchChromium, openFile, CHROMIUM_PATH, CHROMIUM_ARGS, type PageWatch } from '../../src/bench/_browser.js';

interface PlotDiv {
  data: Array<{ x: number[]; y: number[] }>;
  _fullLayout: {
    xaxis: { l2p(v: number): number; _offset: number; _length: number };
    yaxis: { l2p(v: number): number; _offset: number; _length: number };
  };
  getBoundingClientRect(): DOMRect;
}

/** Viewport pixel positions of the points of one trace of a plot. */
export async function tracePixels(page: Page, plotId: string, trace: number): Promise<Array<[number, number]>> {
  return page.evaluate(
    ([id, t]) => {
      const gd = document.getElementById(id as string) as unknown as PlotDiv;
      const tr = gd.data[t as number]!;
      const xa = gd._fullLayout.xaxis, ya = gd._fullLayout.yaxis;
      const box = gd.getBoundingClientRect();
      return tr.x.map((v, i) => [box.left + xa._offset + xa.l2p(v), box.top + ya._offset + ya.l2p(tr.y[i]!)] as [number, number]);
    },
    [plotId, trace] as const,
  );
}

/** Viewport rectangle of a plot's drawing area (inside the axes). */
export async function plotArea(page: Page, plotId: string): Promise<{ left: number; top: number; right: number; bottom: number }> {
  return page.evaluate((id) => {
    const gd = document.getElementById(id) as unknown as PlotDiv;
    const xa = gd._fullLayout.xaxis, ya = gd._fullLayout.yaxis;
    const box = gd.getBoundingClientRect();
    return { left: box.left + xa._offset, top: box.top + ya._offset, right: box.left + xa._offset + xa._length, bottom: box.top + ya._offset + ya._length };
  }, plotId);
}

/**
 * Click, with the real mouse, the point of the sift report's kept-structure trace that lies farthest from
 * every other point (so the click cannot hit another marker), among the points inside the plot's current view
 * and clear of its edges. Returns its point number.
 */
export async function clickIsolatedKeptMarker(page: Page): Promise<{ point: number; gapPx: number }> {
  await page.locator('#landscape-plot').scrollIntoViewIfNeeded();
  const trace = (await page.evaluate('window.polysiftReport.traces.kept')) as number;
  const px = await tracePixels(page, 'landscape-plot', trace);
  const area = await plotArea(page, 'landscape-plot');
  const inside = (p: [number, number]) => p[0] > area.left + 12 && p[0] < area.right - 12 && p[1] > area.top + 12 && p[1] < area.bottom - 12;
  let point = 0;
  let gapPx = -1;
  for (let i = 0; i < px.length; i++) {
    if (!inside(px[i]!)) continue;
    let gap = Infinity;
    for (let j = 0; j < px.length; j++) if (j !== i) gap = Math.min(gap, Math.hypot(px[i]![0] - px[j]![0], px[i]![1] - px[j]![1]));
    if (gap > gapPx) {
      gapPx = gap;
      point = i;
    }
  }
  const [x, y] = px[point]!;
  // As a user does: hover until the label shows (the plot takes the clicked point from its hover data), then click.
  await page.mouse.move(x - 3, y - 3);
  await page.mouse.move(x, y);
  await page.waitForSelector('#landscape-plot .hoverlayer .hovertext', { timeout: 15_000 });
  await page.mouse.click(x, y);
  return { point, gapPx };
}

/** The shaded band of the sift report's nearest-neighbour histogram (the gap auto tolerance found), as log10 Å ends. */
export async function toleranceBands(page: Page): Promise<Array<[number, number]>> {
  return (await page.evaluate(
    'document.getElementById("nn-plot").layout.shapes.filter((s) => s.type === "rect").map((s) => [s.x0, s.x1])',
  )) as Array<[number, number]>;
}
