// The synthetic landscape generator lives beside the report benchmark (src/bench/_synthetic-landscape.ts),
// which needs it from built code too; tests import it from here.
export { syntheticLandscape, renameStructures, type SyntheticOptions, type NameOverride } from '../../src/bench/_synthetic-landscape.js';
