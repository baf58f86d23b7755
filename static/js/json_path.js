// JSON paths as the server writes them: stimuli[2].colour.dkl[1]
export function parsePath(path) {
  const keys = [];
  for (const match of path.matchAll(/([^.[\]]+)|\[(\d+)\]/g)) {
    keys.push(match[2] !== undefined ? Number(match[2]) : match[1]);
  }
  return keys;
}

export function setAt(object, path, value) {
  const keys = parsePath(path);
  let node = object;
  for (const key of keys.slice(0, -1)) node = node[key];
  node[keys[keys.length - 1]] = value;
}
