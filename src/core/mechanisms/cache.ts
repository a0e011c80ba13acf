/**
 * Mechanisms are fitted once per distinct (node, parent set) and shared by every graph of the
 * set that has that node with those parents. The key is the node index and the sorted parent
 * indices.
 */

/** Cache key of node j with `parents` (any order; sorted here). */
export function mechanismKey(node: number, parents: ArrayLike<number>): string {
  const sorted = Array.from(parents).sort((a, b) => a - b);
  return `${node}|${sorted.join(',')}`;
}

/** A 32-bit FNV-1a hash of a key, used to derive a per-mechanism random stream. */
export function keyHash(key: string): number {
  let h = 0x811c9dc5;
  for (let i = 0; i < key.length; i++) {
    h ^= key.charCodeAt(i);
    h = Math.imul(h, 0x01000193);
  }
  return h >>> 0;
}

/** Index of each distinct (node, parents) in first-seen order, with its parent list. */
export class MechanismCache {
  private readonly index = new Map<string, number>();
  readonly entries: { readonly node: number; readonly parents: Int32Array; readonly key: string }[] = [];

  /** The mechanism index of (node, parents), registering it on first sight. */
  indexOf(node: number, parents: ArrayLike<number>): number {
    const key = mechanismKey(node, parents);
    let m = this.index.get(key);
    if (m === undefined) {
      m = this.entries.length;
      this.index.set(key, m);
      this.entries.push({ node, parents: Int32Array.from(parents).sort(), key });
    }
    return m;
  }

  get size(): number {
    return this.entries.length;
  }
}
