// Writes one generated crystal as a CIF 1.1 data block (IUCr core dictionary items: cell, space group,
// symmetry operations, atom sites).
import { formatOp } from './space-groups.js';
import { cellFromBasis } from './mat3.js';
import type { Expressed } from './rewrite.js';

export interface BlockHeader {
  id: string;
  /** Hermann–Mauguin symbol to write, or null. */
  symbol: string | null;
  /** International Tables number to write, or null. */
  itNumber: number | null;
  /** Write the operations loop (when the description has operations). */
  listOps: boolean;
  /** Extra data items (name without leading underscore -> value). */
  items?: Array<[string, string]>;
}

export function writeCifBlock(e: Expressed, h: BlockHeader): string {
  const [a, b, c, al, be, ga] = cellFromBasis(e.basis);
  const lines: string[] = [`data_${h.id}`];
  for (const [name, value] of h.items ?? []) lines.push(`_${name} ${value}`);
  lines.push(
    `_cell_length_a ${a.toFixed(5)}`,
    `_cell_length_b ${b.toFixed(5)}`,
    `_cell_length_c ${c.toFixed(5)}`,
    `_cell_angle_alpha ${al.toFixed(4)}`,
    `_cell_angle_beta ${be.toFixed(4)}`,
    `_cell_angle_gamma ${ga.toFixed(4)}`,
  );
  if (h.symbol !== null) lines.push(`_space_group_name_H-M_alt '${h.symbol}'`);
  if (h.itNumber !== null) lines.push(`_space_group_IT_number ${h.itNumber}`);
  if (h.listOps && e.ops) {
    lines.push('loop_', '_space_group_symop_operation_xyz');
    for (const op of e.ops) lines.push(`'${formatOp(op)}'`);
  }
  lines.push('loop_', '_atom_site_label', '_atom_site_type_symbol', '_atom_site_fract_x', '_atom_site_fract_y', '_atom_site_fract_z');
  // Labels are element + running number in the written order, as an optimiser's output would number them.
  const counts: Record<string, number> = {};
  for (let i = 0; i < e.elements.length; i++) {
    const el = e.elements[i];
    counts[el] = (counts[el] ?? 0) + 1;
    lines.push(`${el}${counts[el]} ${el} ${e.frac[3 * i].toFixed(6)} ${e.frac[3 * i + 1].toFixed(6)} ${e.frac[3 * i + 2].toFixed(6)}`);
  }
  return `${lines.join('\n')}\n`;
}
