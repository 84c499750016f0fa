// The report module's public surface: the sift report, and the page pieces other reports reuse.
export { renderSiftReport, LANDSCAPE_CAUTION, type SiftReportOptions } from './sift-report.js';
export { renderPage, fillPlaceholders, PAGE_DATA_ID, PAGE_CSP, type PageParts } from './page.js';
export { escapeHtml, jsonForScript, inlineScriptSource } from './escape.js';
export { readTemplate, readPlotlyBundle, plotlyBundlePath, templatesDir } from './assets.js';
export { VIRIDIS_STOPS, FAMILY_COLOURS, UNASSIGNED_COLOUR, colourAt, colourClasses, stepColourscale, familyColour } from './colours.js';
export { logHistogram, type LogHistogram } from './log-histogram.js';
export { buildSiftPageData, buildEdgeClasses, edgeClassOf, packAmd, unpackAmdRow, AMD_STEP_ANGSTROM, EDGE_CLASSES, type SiftPageData, type EdgeClasses, type PackedAmd } from './sift-data.js';
