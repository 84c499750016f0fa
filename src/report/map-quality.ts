// How far the metric map can be trusted, in words: Kruskal's stress-1 read with his own verbal scale
// ("Multidimensional scaling by optimizing goodness of fit to a nonmetric hypothesis", Psychometrika 1964:
// 0.20 poor, 0.10 fair, 0.05 good, 0.025 excellent; from memory), with trustworthiness (Venna & Kaski,
// "Neighborhood preservation in nonlinear projection methods: an experimental study", ICANN 2001) as the share
// of map neighbours that are neighbours under EMD. A map whose stress is poor is folded away in the report
// rather than shown as if its shapes were findings.
import type { Embedding } from '../landscape/schema.js';

export type MapGrade = 'excellent' | 'good' | 'fair' | 'poor';

export interface MapQuality {
  stress: number | null;
  trustworthiness: number | null;
  /** Kruskal's grade of the stress (null when the map gives none). */
  grade: MapGrade | null;
  /** Whether the report shows the map folded (poor stress). */
  folded: boolean;
}

/** Stress-1 at or above which a map is poor (Kruskal 1964). */
export const POOR_STRESS = 0.2;

export function mapQuality(embedding: Embedding | null): MapQuality | null {
  if (!embedding || embedding.coords.length === 0) return null;
  const find = (prefix: string) => embedding.quality.find((q) => q.name.toLowerCase().startsWith(prefix))?.value ?? null;
  const stress = find('kruskal stress');
  const trustworthiness = find('trustworthiness');
  const grade: MapGrade | null =
    stress === null ? null : stress <= 0.025 ? 'excellent' : stress <= 0.05 ? 'good' : stress < POOR_STRESS ? 'fair' : 'poor';
  return { stress, trustworthiness, grade, folded: grade === 'poor' };
}
