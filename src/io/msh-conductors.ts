/**
 * Conductors of a Gmsh MSH file. They come from physical surfaces (`$PhysicalNames` with
 * dimension 2; unnamed physical groups become `physical_N`). Without any physical group each
 * surface entity would be one face of a body, and calling the faces of a box six conductors
 * would be wrong physics; so surface entities that share nodes are joined into one body, named
 * after its lowest entity tag (`surface_7`), with a warning. `groupNamed` marks the groups named
 * in `$PhysicalNames`: a file with one body keeps such a name, and takes its stem otherwise.
 */

/**
 * Group of each triangle and the groups' names, from the physical tag and entity tag of each
 * (`phys` 0 where an element has none). `nodeCount` sizes the node-to-entity map.
 */
export function conductorGroups(
  triangles: Uint32Array, phys: Uint32Array, entity: Uint32Array, nt: number,
  physicalNames: Map<number, string>, nodeCount: number, warnings: string[],
): { group: Uint32Array; groupNames: string[]; groupNamed: boolean[] } {
  const group = new Uint32Array(nt);
  const groupNames: string[] = [];
  const groupNamed: boolean[] = [];
  const byKey = new Map<string, number>();
  const use = (key: string, name: string, named = false): number => {
    let g = byKey.get(key);
    if (g === undefined) { g = groupNames.length; groupNames.push(name); groupNamed.push(named); byKey.set(key, g); }
    return g;
  };
  let anyPhysical = false;
  for (let t = 0; t < nt; t++) if (phys[t] !== 0) { anyPhysical = true; break; }
  if (anyPhysical) {
    // Elements come in runs of one entity: remember the last key's group.
    let lastP = -1, lastE = -1, lastG = 0;
    for (let t = 0; t < nt; t++) {
      const p = phys[t], e = p !== 0 ? 0 : entity[t];
      if (p !== lastP || e !== lastE) {
        const given = p !== 0 ? physicalNames.get(p) : undefined;
        lastG = p !== 0 ? use(`p${p}`, given ?? `physical_${p}`, given !== undefined && given.trim() !== "") : use(`e${e}`, `surface_${e}`);
        lastP = p; lastE = e;
      }
      group[t] = lastG;
    }
    return { group, groupNames, groupNamed };
  }
  // No physical groups: join entities through shared nodes (union-find over entity tags).
  const entities = new Map<number, number>();
  for (let t = 0; t < nt; t++) if (!entities.has(entity[t])) entities.set(entity[t], entities.size);
  const parent = new Int32Array(entities.size);
  for (let k = 0; k < parent.length; k++) parent[k] = k;
  const find = (a: number): number => { while (parent[a] !== a) { parent[a] = parent[parent[a]]; a = parent[a]; } return a; };
  const nodeOwner = new Int32Array(nodeCount).fill(-1);
  let runTag = -1, e = 0;
  for (let t = 0; t < nt; t++) {
    if (entity[t] !== runTag) { runTag = entity[t]; e = entities.get(runTag) as number; }
    for (let j = 0; j < 3; j++) {
      const v = triangles[3 * t + j];
      if (nodeOwner[v] < 0) nodeOwner[v] = e;
      else { const a = find(nodeOwner[v]), b = find(e); if (a !== b) parent[Math.max(a, b)] = Math.min(a, b); }
    }
  }
  const lowest = new Map<number, number>();
  for (const [tag, e] of entities) {
    const r = find(e);
    const l = lowest.get(r);
    if (l === undefined || tag < l) lowest.set(r, tag);
  }
  let lastE = -1, lastG = 0;
  for (let t = 0; t < nt; t++) {
    if (entity[t] !== lastE) {
      lastE = entity[t];
      const tag = lowest.get(find(entities.get(lastE) as number)) as number;
      lastG = use(`b${tag}`, `surface_${tag}`);
    }
    group[t] = lastG;
  }
  if (entities.size > groupNames.length) {
    warnings.push(`no physical groups: ${entities.size} surface entities joined into ${groupNames.length} conductor(s) by shared nodes; define physical surfaces in Gmsh to choose conductors and their names`);
  }
  return { group, groupNames, groupNamed };
}
