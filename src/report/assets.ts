// Files the report pages are made of, read at run time: the page templates in `templates/` (shipped in
// the package beside `dist/`) and the plotting library from node_modules. Both are resolved from this
// module's own location, so a report can be written wherever polysift is installed.
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { fileURLToPath } from 'node:url';

// src/report/assets.ts and dist/report/assets.js both sit two folders below the package root.
const TEMPLATES_DIR = fileURLToPath(new URL('../../templates/', import.meta.url));

const cache = new Map<string, string>();

/** Absolute path of the templates folder. */
export function templatesDir(): string {
  return TEMPLATES_DIR;
}

/** A file of `templates/` as text (cached: templates do not change while a process runs). */
export function readTemplate(name: string): string {
  if (!/^[A-Za-z0-9._-]+$/.test(name)) throw new Error(`readTemplate: not a template file name: ${name}`);
  const key = `template:${name}`;
  let text = cache.get(key);
  if (text === undefined) {
    const path = TEMPLATES_DIR + name;
    try {
      text = readFileSync(path, 'utf8');
    } catch (err) {
      throw new Error(`the report template ${path} could not be read (${(err as Error).message}); is polysift installed completely?`);
    }
    cache.set(key, text);
  }
  return text;
}

/** Path of the minified plotly.js bundle, resolved like an import from this module. */
export function plotlyBundlePath(): string {
  const require = createRequire(import.meta.url);
  try {
    return require.resolve('plotly.js-dist-min');
  } catch (err) {
    throw new Error(`the plotting library plotly.js-dist-min could not be found (${(err as Error).message}); reinstall polysift's dependencies`);
  }
}

/** The minified plotly.js bundle's source (cached). */
export function readPlotlyBundle(): string {
  let text = cache.get('plotly');
  if (text === undefined) {
    text = readFileSync(plotlyBundlePath(), 'utf8');
    cache.set('plotly', text);
  }
  return text;
}
