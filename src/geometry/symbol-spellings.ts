// The ways people write one space group, so that a search for any of them finds it: every setting's
// Hermann–Mauguin symbol with and without spaces ('P 1 21/c 1', 'P121/c1', 'P 21/n'), the short symbol and the
// orthorhombic symbol read off the full one (which gives the newer e-glide names: 'Cmce' for 'Cmca'), screw axes written with
// an underscore ('P2_1/c'), and the International Tables number. Lower case; the caller lower-cases queries.
import { defaultSetting, settingsOfGroup } from './space-group-table.js';

/** Every spelling of group `number` (lower case, distinct), the number itself first. */
export function symbolSpellings(number: number): string[] {
  const out = new Set<string>([String(number)]);
  const add = (spaced: string) => {
    const tokens = spaced.trim().split(/\s+/);
    for (const t of [tokens, tokens.map(underscoreScrew)]) {
      out.add(t.join(' ').toLowerCase());
      out.add(t.join('').toLowerCase());
      // Monoclinic symbols without the placeholder 1s: 'P 21/c' for 'P 1 21/c 1' (in trigonal symbols the 1 is
      // meaningful: P 3 1 2 and P 3 2 1 are two groups).
      const short = t.filter((p, i) => i === 0 || p !== '1');
      if (number >= 3 && number <= 15 && short.length > 1) {
        out.add(short.join(' ').toLowerCase());
        out.add(short.join('').toLowerCase());
      }
    }
  };
  for (const s of [defaultSetting(number), ...settingsOfGroup(number)]) {
    add(s.hm);
    add(s.full);
    // Orthorhombic centrosymmetric groups (47-74) are named by the planes of their full symbol, the part after
    // each '/': 'C 2/m 2/c 21/e' -> 'C m c e'.
    const parts = s.full.split(/\s+/);
    if (number >= 47 && number <= 74 && parts.length === 4 && parts.slice(1).every((p) => p.includes('/'))) {
      add([parts[0], ...parts.slice(1).map((p) => p.slice(p.indexOf('/') + 1))].join(' '));
    }
  }
  return [...out];
}

/** '21' -> '2_1', '41/a' -> '4_1/a': a screw axis n_k (k < n) written with an underscore. */
function underscoreScrew(token: string): string {
  const m = /^([2346])([1-5])(\/.*)?$/.exec(token);
  if (m === null || Number(m[2]) >= Number(m[1])) return token;
  return `${m[1]}_${m[2]}${m[3] ?? ''}`;
}
