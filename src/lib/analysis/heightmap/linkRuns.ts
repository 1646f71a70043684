/**
 * Connected components of a run table (see foregroundRuns' RunTable): the label (1…nbComponents) of each run,
 * numbered in raster order of each component's first pixel.
 *
 * Two-pass labelling on runs with union–find: each run takes the label of the first run it touches in the row
 * above (overlapping columns; for 8-connectivity also diagonal, i.e. columns widened by one), and labels of the
 * other runs it touches are merged with it. The root of every set is its smallest provisional label, so a second
 * pass over the provisional labels, in increasing order, numbers the components by their first run. The work is
 * per run, not per pixel. Arrays in, arrays out: no short-lived object reaches optimised code (see surfaceRow's
 * SurfaceFrame).
 *
 * @param start - first column of each run
 * @param end - one past the last column of each run
 * @param rowFirst - index of each row's first run; rowFirst[height] = number of runs
 * @param height - rows of the image
 * @param connectivity - 4 (edge neighbours) or 8 (edge and corner neighbours)
 * @param runLabel - receives the label of each run; length ≥ number of runs
 * @returns the number of components
 * @see Rosenfeld A, Pfaltz JL 1966, J ACM 13(4):471–494, "Sequential operations in digital picture processing" (two-pass labelling)
 * @see He L, Chao Y, Suzuki K 2008, IEEE Trans Image Process 17(5):749–756, "A run-based two-scan labeling algorithm" (from memory)
 * @see Wu K, Otoo E, Suzuki K 2009, Pattern Anal Appl 12:117–135 (union–find with the smallest label as root; from memory)
 */
export function linkRuns(
  start: Int32Array, end: Int32Array, rowFirst: Int32Array, height: number, connectivity: 4 | 8, runLabel: Int32Array,
): number {
  const nbRuns = rowFirst[height];
  const reach = connectivity === 8 ? 1 : 0;
  // parent[l] ≤ l always, so the root of a set is its smallest label
  const parent = new Int32Array(nbRuns + 1);
  let nbProvisional = 0;
  for (let y = 0; y < height; y++) {
    const first = rowFirst[y];
    const last = rowFirst[y + 1];
    if (y === 0) {
      for (let k = first; k < last; k++) {
        runLabel[k] = ++nbProvisional;
        parent[nbProvisional] = nbProvisional;
      }
      continue;
    }
    nbProvisional = linkRow(start, end, runLabel, parent, rowFirst[y - 1], first, first, last, reach, nbProvisional);
  }
  // final labels in increasing provisional order: a root gets the next number, any other label its root's
  const final = parent;
  let nbComponents = 0;
  for (let l = 1; l <= nbProvisional; l++) final[l] = parent[l] === l ? ++nbComponents : final[parent[l]];
  for (let k = 0; k < nbRuns; k++) runLabel[k] = final[runLabel[k]];
  return nbComponents;
}

/**
 * Label the runs [first, last) of a row against the runs [prevFirst, prevLast) of the row above; returns the
 * number of provisional labels. A run touches a run above when their columns, widened by `reach`, overlap.
 */
function linkRow(
  start: Int32Array, end: Int32Array, runLabel: Int32Array, parent: Int32Array,
  prevFirst: number, prevLast: number, first: number, last: number, reach: number, nbProvisional: number,
): number {
  let j = prevFirst;
  for (let k = first; k < last; k++) {
    const s = start[k] - reach;
    const e = end[k] + reach;
    // runs above that end before this one starts cannot touch it nor any later run of this row
    while (j < prevLast && end[j] <= s) j++;
    let label = 0;
    let jj = j;
    while (jj < prevLast && start[jj] < e) {
      const root = find(parent, runLabel[jj]);
      if (label === 0) label = root;
      else if (root !== label) {
        // merge into the smaller label so that roots stay the smallest of their set
        if (root < label) {
          parent[label] = root;
          label = root;
        } else parent[root] = label;
      }
      jj++;
    }
    // the last run above that touched this one may touch the next run of this row too
    if (jj > j) j = jj - 1;
    if (label === 0) {
      label = ++nbProvisional;
      parent[label] = label;
    }
    runLabel[k] = label;
  }
  return nbProvisional;
}

/** Root of label l, halving the path on the way (parents stay smaller than their children). */
function find(parent: Int32Array, l: number): number {
  while (parent[l] !== l) {
    parent[l] = parent[parent[l]];
    l = parent[l];
  }
  return l;
}
