// This browser's storage for both pages: a JSON value under a key, read and written without
// ever throwing (storage may be switched off, full, or hold something unreadable).

/** The value kept under `key`, or null when there is none or it cannot be read. */
export function readStored(key) {
  try {
    return JSON.parse(localStorage.getItem(key) || 'null');
  } catch {
    return null;
  }
}

/** Keep `value` under `key`. Returns false when storage is unavailable. */
export function store(key, value) {
  try {
    localStorage.setItem(key, JSON.stringify(value));
    return true;
  } catch {
    return false;
  }
}
