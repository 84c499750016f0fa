// Headless Chromium for the report tests; the code lives beside the report benchmark
// (src/bench/_browser.ts), which launches the same browser the same way.
export { launchChromium, openFile, CHROMIUM_PATH, CHROMIUM_ARGS, type PageWatch } from '../../src/bench/_browser.js';
