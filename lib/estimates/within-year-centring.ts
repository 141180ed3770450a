/**
 * Within-subject centring of a brood-level predictor, with the site-year as subject.
 *
 * References:
 * - van de Pol, M. & Wright, J. (2009). A simple method for distinguishing within- versus
 *   between-subject effects using mixed models. Animal Behaviour 77: 753-758.
 *
 * within = value - mean of its group; the group mean is the between-group predictor.
 */
export interface CentredPredictor {
  /** value minus its group's mean, in input order. */
  readonly within: Float64Array;
  /** Each group's mean, keyed by group. */
  readonly groupMeans: ReadonlyMap<number, number>;
  /** Each group's size, keyed by group. */
  readonly groupSizes: ReadonlyMap<number, number>;
}

/**
 * Centres `values` within the groups given by `groups` (equal lengths, finite values).
 * Returns the within-group deviations and the group means. Throws RangeError on a length mismatch.
 * Example: centreWithinGroups([1, 3, 10], [2001, 2001, 2002]) -> within [-1, 1, 0], means {2001: 2, 2002: 10}.
 */
export function centreWithinGroups(values: ArrayLike<number>, groups: ArrayLike<number>): CentredPredictor {
  if (values.length !== groups.length) throw new RangeError(`values have ${values.length} entries, groups have ${groups.length}`);
  const sums = new Map<number, number>();
  const sizes = new Map<number, number>();
  for (let i = 0; i < values.length; i += 1) {
    sums.set(groups[i]!, (sums.get(groups[i]!) ?? 0) + values[i]!);
    sizes.set(groups[i]!, (sizes.get(groups[i]!) ?? 0) + 1);
  }
  const groupMeans = new Map<number, number>();
  for (const [group, sum] of sums) groupMeans.set(group, sum / sizes.get(group)!);
  const within = new Float64Array(values.length);
  for (let i = 0; i < values.length; i += 1) within[i] = values[i]! - groupMeans.get(groups[i]!)!;
  return { within, groupMeans, groupSizes: sizes };
}
