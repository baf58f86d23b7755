// JSON paths as the server writes them: stimuli[2].colour.dkl[1]
export function parsePath(path) {
  const keys = [];
  for (const match of path.matchAll(/([^.[\]]+)|\[(\d+)\]/g)) {
    keys.push(match[2] !== undefined ? Number(match[2]) : match[1]);
  }
  return keys;
}

export function formatPath(keys) {
  let text = "";
  for (const key of keys) text += typeof key === "number" ? `[${key}]` : (text ? `.${key}` : key);
  return text;
}

export function setAt(object, path, value) {
  const keys = typeof path === "string" ? parsePath(path) : path;
  let node = object;
  for (const key of keys.slice(0, -1)) node = node[key];
  node[keys[keys.length - 1]] = value;
}

export function getAt(object, path) {
  let node = object;
  for (const key of typeof path === "string" ? parsePath(path) : path) {
    if (node === null || typeof node !== "object" || !(key in node)) return undefined;
    node = node[key];
  }
  return node;
}

export function deleteAt(object, path) {
  const keys = typeof path === "string" ? parsePath(path) : path;
  const parent = getAt(object, keys.slice(0, -1));
  if (parent && typeof parent === "object") delete parent[keys[keys.length - 1]];
}

export const sameValue = (a, b) => JSON.stringify(a) === JSON.stringify(b);

const isObject = (v) => v !== null && typeof v === "object" && !Array.isArray(v);

// What changed from `base` to `mine`, as [{path (keys), base, mine}]: objects compared key by key, lists of equal
// length entry by entry, anything else as one value (a list that grew or shrank is one change).
export function changes(base, mine, keys = []) {
  if (isObject(base) && isObject(mine)) {
    const names = [...new Set([...Object.keys(base), ...Object.keys(mine)])];
    return names.flatMap((name) => changes(base[name], mine[name], [...keys, name]));
  }
  if (Array.isArray(base) && Array.isArray(mine) && base.length === mine.length) {
    return base.flatMap((item, i) => changes(item, mine[i], [...keys, i]));
  }
  return sameValue(base, mine) ? [] : [{ path: keys, base, mine }];
}

// My changes applied onto `theirs` (a newer saved version of the same base). Where theirs also changed a value
// differently, mine is kept and the change is reported as a conflict with their value.
export function mergeInto(theirs, mineChanges) {
  const merged = structuredClone(theirs);
  const report = [];
  for (const change of mineChanges) {
    const current = getAt(merged, change.path);
    const conflict = !sameValue(current, change.base) && !sameValue(current, change.mine);
    const parent = getAt(merged, change.path.slice(0, -1));
    if (parent === undefined || parent === null || typeof parent !== "object") {
      report.push({ ...change, theirs: current, status: "not applied: that part is gone from the saved file" });
      continue;
    }
    if (change.mine === undefined) deleteAt(merged, change.path);
    else setAt(merged, change.path, structuredClone(change.mine));
    report.push({ ...change, theirs: current, status: conflict ? "conflict: yours kept" : "applied" });
  }
  return { merged, report };
}
