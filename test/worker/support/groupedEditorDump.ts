/** A dump for the editor's streaming tests, generated from a seed. */
import { QUERY_NAMES, seededRandom } from '../../reference/random';

/**
 * Rows grouped by query (queries keyed by their text), grades 0–4 (many 0), scores on a coarse grid so
 * ties happen, some queries with nothing relevant, an aisle segment and a query weight column (so the
 * means are weighted, as the join takes it). Query q is `${QUERY_NAMES[q % length]} ${q}`, its items sku-q-i.
 */
export function groupedEditorDump(queries: number, seed: number): string {
  const rand = seededRandom(seed);
  const lines = ['query_id,item_id,label,score,aisle,weight'];
  for (let q = 0; q < queries; q++) {
    const name = `${QUERY_NAMES[q % QUERY_NAMES.length]} ${q}`;
    const size = 1 + Math.floor(rand() * 40);
    const hopeless = rand() < 0.05;
    for (let i = 0; i < size; i++) {
      const grade = hopeless ? 0 : Math.max(0, Math.floor(rand() * 7) - 2);
      lines.push(`${name},sku-${q}-${i},${grade},${(Math.round((grade * 0.2 + rand()) * 20) / 20).toFixed(2)},aisle-${q % 7},${1 + (q % 3)}`);
    }
  }
  return lines.join('\n') + '\n';
}
