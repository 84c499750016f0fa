// The tool's version, read once from package.json so that outputs and the report can name it.
import { readFileSync } from 'node:fs';

const pkg = JSON.parse(readFileSync(new URL('../package.json', import.meta.url), 'utf8')) as { version: string };
export const VERSION: string = pkg.version;
