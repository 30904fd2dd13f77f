/**
 * Tenure bands: periods since a user's first active period, grouped by lower edges.
 * @example bandLabels([0, 1, 4, 12]) // ['0', '1-3', '4-11', '12+']
 */
export function bandLabels(edges: readonly number[]): string[] {
  return edges.map((lo, i) => {
    const hi = i + 1 < edges.length ? edges[i + 1] - 1 : undefined;
    if (hi === undefined) return `${lo}+`;
    return hi === lo ? `${lo}` : `${lo}-${hi}`;
  });
}
