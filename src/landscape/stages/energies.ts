// Stage "energies": attach one energy per readable structure, from the energies CSV (by id) or from a numeric
// CIF data item. Problems (missing, unparsable, repeated ids) stay on the row as a note and a reason; the
// structure is still compared.
import { readFileSync } from 'node:fs';
import { assignEnergies, decodeEnergyFile, energySummary, parseEnergyCsv } from '../../io/energies.js';
import type { SiftState } from './state.js';

export async function energiesStage(s: SiftState): Promise<void> {
  const p = s.params;
  if (p.energiesFile !== null) {
    let text: string;
    try {
      const decoded = decodeEnergyFile(readFileSync(p.energiesFile));
      text = decoded.text;
      if (decoded.encoding !== 'UTF-8') s.messages.push(`${p.energiesFile} is ${decoded.encoding} text (as some spreadsheets save "Unicode text"); read as such`);
    } catch (err) {
      throw new Error(`cannot read the energies file ${p.energiesFile}: ${(err as NodeJS.ErrnoException).code ?? (err as Error).message}`);
    }
    const table = parseEnergyCsv(text, p.energiesFile, { idColumn: s.idColumn, energyColumn: s.energyColumn });
    const recordsAt = s.work.filter((w) => w.record !== null);
    const assignment = assignEnergies(recordsAt.map((w) => w.row.id), table, recordsAt.map((w) => w.row.block));
    recordsAt.forEach((w, i) => {
      w.row.energy = assignment.energy[i];
      const problem = assignment.problem[i];
      if (problem !== '') {
        w.row.notes.push(problem);
        w.row.reason = problem;
      }
    });
    s.energyTable = table;
    s.energyAssignment = assignment;
    s.messages.push(...energySummary(table, assignment));
  } else if (p.energyItem !== null) {
    let missing = 0;
    for (const w of s.work) {
      if (!w.record) continue;
      w.row.energy = w.record.energy;
      if (w.record.energy === null) {
        missing++;
        const problem = `no energy: the block has no numeric ${p.energyItem}`;
        w.row.notes.push(problem);
        w.row.reason = problem;
      }
    }
    if (missing > 0) s.messages.push(`${missing} structure(s) have no numeric ${p.energyItem} (reason per row in structures.csv)`);
  }
}
