// Disorder and partial occupancy: which listed sites make up the one structure we compare.
//
// Policy (documented in DEVELOPERS.md, recorded as a note on every structure it changes):
// - a site with no disorder group (absent, '.', '?' or '0') is kept whatever its occupancy; sites with
//   occupancy below 1 and no group are counted in a note (they are often solvent or split atoms the
//   file did not label, and we cannot tell which alternative belongs together);
// - sites with a disorder group are grouped by `_atom_site_disorder_assembly` (one default assembly
//   when absent); in each assembly the group with the largest total occupancy is kept (ties: the group
//   listed first) and the other groups are dropped;
// - a negative group (the refinement convention for disorder about a special position, whose symmetry
//   copies overlap) is treated like any other group and named in a note.
// Occupancy-weighted quantities (density) do not use this selection: they weight every listed site.
import type { Site } from '../types.js';

export interface SiteSelection {
  /** Indices into the record's sites, in listed order. */
  kept: number[];
  notes: string[];
}

export function selectOrderedSites(sites: Site[]): SiteSelection {
  const kept: number[] = [];
  const notes: string[] = [];
  // assembly -> group -> { occupancy sum, site indices } in listing order
  const assemblies = new Map<string, Map<string, { occupancy: number; indices: number[] }>>();
  let partialNoGroup = 0;
  const negativeGroups = new Set<string>();
  sites.forEach((s, i) => {
    const group = normaliseGroup(s.disorderGroup);
    if (group === null) {
      if (s.occupancy < 1 - 1e-6) partialNoGroup++;
      return;
    }
    if (group.startsWith('-')) negativeGroups.add(group);
    const assembly = normaliseGroup(s.disorderAssembly) ?? '';
    let groups = assemblies.get(assembly);
    if (groups === undefined) assemblies.set(assembly, (groups = new Map()));
    let g = groups.get(group);
    if (g === undefined) groups.set(group, (g = { occupancy: 0, indices: [] }));
    g.occupancy += s.occupancy;
    g.indices.push(i);
  });

  const keep = new Uint8Array(sites.length);
  sites.forEach((s, i) => {
    if (normaliseGroup(s.disorderGroup) === null) keep[i] = 1;
  });
  for (const [assembly, groups] of assemblies) {
    let best: string | null = null;
    let bestOcc = -Infinity;
    for (const [name, g] of groups) {
      if (g.occupancy > bestOcc + 1e-9) {
        best = name;
        bestOcc = g.occupancy;
      }
    }
    for (const i of groups.get(best!)!.indices) keep[i] = 1;
    const dropped = [...groups].filter(([name]) => name !== best);
    const where = assembly === '' ? 'disorder' : `disorder assembly ${assembly}`;
    if (dropped.length === 0) {
      notes.push(`${where}: only group ${best} is listed; kept its ${groups.get(best!)!.indices.length} sites`);
    } else {
      const droppedText = dropped.map(([name, g]) => `group ${name} (${g.indices.length} sites, occupancy sum ${round3(g.occupancy)})`).join(', ');
      notes.push(
        `${where}: kept group ${best} (occupancy sum ${round3(bestOcc)}, the largest), dropped ${droppedText}`,
      );
    }
  }
  for (let i = 0; i < sites.length; i++) if (keep[i]) kept.push(i);
  if (partialNoGroup > 0) {
    notes.push(`${partialNoGroup} site(s) with occupancy below 1 and no disorder group kept as whole atoms`);
  }
  if (negativeGroups.size > 0) {
    notes.push(
      `disorder group(s) ${[...negativeGroups].join(', ')} mark disorder about a special position; their symmetry copies may overlap`,
    );
  }
  return { kept, notes };
}

/** '.', '?', '0' and empty mean "not disordered". */
function normaliseGroup(g: string | null): string | null {
  if (g === null) return null;
  const t = g.trim();
  if (t === '' || t === '.' || t === '?' || t === '0') return null;
  return t;
}

function round3(v: number): number {
  return Math.round(v * 1000) / 1000;
}
