// Small invented crystal records for the geometry tests (no file reading involved).
import type { CellParams, CrystalRecord, OpsOrigin, Site, SymOp } from '../src/types.js';
import { parseSymopXyz } from '../src/geometry/symmetry.js';

export interface SiteSpec {
  label: string;
  element: string;
  frac: [number, number, number];
  occupancy?: number;
  group?: string | null;
  assembly?: string | null;
}

export function makeRecord(
  id: string, cell: CellParams, ops: SymOp[] | string[], sites: SiteSpec[],
  extra: { opsOrigin?: OpsOrigin; text?: string; spaceGroup?: string | null } = {},
): CrystalRecord {
  const opList = ops.map((o) => (typeof o === 'string' ? parseSymopXyz(o) : o));
  const siteList: Site[] = sites.map((s) => ({
    label: s.label,
    element: s.element,
    frac: s.frac,
    occupancy: s.occupancy ?? 1,
    disorderGroup: s.group ?? null,
    disorderAssembly: s.assembly ?? null,
  }));
  return {
    id,
    file: `${id}.cif`,
    block: id,
    source: `${id}.cif#${id}`,
    line: 1,
    cell,
    ops: opList,
    opsOrigin: extra.opsOrigin ?? 'listed',
    spaceGroup: extra.spaceGroup ?? null,
    sites: siteList,
    energy: null,
    text: extra.text ?? `data_${id}\n`,
    notes: [],
  };
}

export function cubic(a: number): CellParams {
  return { a, b: a, c: a, alpha: 90, beta: 90, gamma: 90 };
}
