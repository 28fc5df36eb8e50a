/**
 * Grouping into a Map of arrays, appending in place: the spread-and-copy idiom (`m.set(k, [...(m.get(k) ?? []), x])`)
 * copies a group's array for every member, which grows with the square of a group's size (wake rows, windows and
 * figures of a season-long campaign run to tens of thousands).
 */

/** Appends `value` to the array of `key` in `map`, creating it when absent. */
export function pushTo<K, V>(map: Map<K, V[]>, key: K, value: V): void {
  const list = map.get(key);
  if (list) list.push(value);
  else map.set(key, [value]);
}

/** The items grouped by key, groups and members in the order first met. */
export function groupBy<T, K>(items: Iterable<T>, key: (item: T) => K): Map<K, T[]> {
  const out = new Map<K, T[]>();
  for (const item of items) pushTo(out, key(item), item);
  return out;
}
