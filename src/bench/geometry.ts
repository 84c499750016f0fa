// Benchmark: crystal record -> periodic set and crystal facts (density, molecules, Z) for invented
// molecular crystals of the sizes CSP runs produce. Prints structures per second.
import type { CrystalRecord, Site, SymOp } from '../types.js';
import { crystalFacts } from '../geometry/facts.js';
import { toPeriodicSet } from '../geometry/periodic-set.js';
import { opsFromSymbol } from '../geometry/symmetry.js';
import { cellToBasis } from '../geometry/cell.js';

/** An invented molecule of `n` atoms: a zig-zag of C with one H per C (bond lengths 1.5 and 1.0 Å). */
function inventedMolecule(n: number): [string, number, number, number][] {
  const atoms: [string, number, number, number][] = [];
  const nc = Math.ceil(n / 2);
  for (let k = 0; k < nc && atoms.length < n; k++) {
    const x = 1.25 * k;
    const y = k % 2 === 0 ? 0 : 0.85;
    atoms.push(['C', x, y, 0]);
    if (atoms.length < n) atoms.push(['H', x, k % 2 === 0 ? -1.0 : 1.85, 0]);
  }
  return atoms;
}

/** A crystal of the invented molecule in space group `symbol`, about 30 Å^3 per atom (loose, so molecules stay apart). */
function inventedCrystal(id: string, atomsPerMolecule: number, symbol: string): CrystalRecord {
  const ops: SymOp[] = opsFromSymbol(symbol)!;
  const mol = inventedMolecule(atomsPerMolecule);
  const span = 1.25 * Math.ceil(atomsPerMolecule / 2) + 4;
  const monoclinic = symbol === 'P21/c' || symbol === 'C2/c';
  const cell = { a: span, b: 9, c: Math.max(8, (30 * atomsPerMolecule * ops.length) / (span * 9)), alpha: 90, beta: monoclinic ? 101 : 90, gamma: 90 };
  const b = cellToBasis(cell);
  const sites: Site[] = mol.map(([el, x, y, z], i) => {
    const fz = z / b[8]! + 0.21;
    const fy = (y - (fz - 0.21) * b[7]!) / b[4]! + 0.17;
    const fx = (x - (fy - 0.17) * b[3]! - (fz - 0.21) * b[6]!) / b[0]! + 0.05;
    return { label: `${el}${i + 1}`, element: el, frac: [fx, fy, fz], occupancy: 1, disorderGroup: null, disorderAssembly: null };
  });
  return {
    id, file: `${id}.cif`, block: id, source: `${id}.cif#${id}`, line: 1, cell, ops, opsOrigin: 'listed',
    spaceGroup: symbol, sites, energy: null, text: '', notes: [],
  };
}

export async function run(): Promise<void> {
  const cases: [string, number, string][] = [
    ['P21/c, 30-atom molecule (120 atoms/cell)', 30, 'P21/c'],
    ['Pbca, 40-atom molecule (320 atoms/cell)', 40, 'Pbca'],
    ['C2/c, 80-atom molecule (640 atoms/cell)', 80, 'C2/c'],
  ];
  for (const [name, n, symbol] of cases) {
    const record = inventedCrystal(`bench-${n}`, n, symbol);
    // Warm up, then time whole structures.
    for (let i = 0; i < 50; i++) {
      toPeriodicSet(record, { hydrogens: 'keep' });
      crystalFacts(record);
    }
    let reps = 0;
    const start = process.hrtime.bigint();
    let elapsedS = 0;
    while (elapsedS < 1.5) {
      toPeriodicSet(record, { hydrogens: 'drop' });
      crystalFacts(record);
      reps++;
      elapsedS = Number(process.hrtime.bigint() - start) / 1e9;
    }
    const facts = crystalFacts(record);
    process.stdout.write(
      `${name}: ${(reps / elapsedS).toFixed(0)} structures/s (periodic set + facts), ` +
        `${((elapsedS / reps) * 1000).toFixed(2)} ms each; Z = ${facts.z}, ${facts.atomsPerCell} atoms\n`,
    );
  }
}
