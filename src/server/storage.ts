import { createHash, randomUUID } from 'node:crypto';
import { mkdir, readFile, rm, writeFile } from 'node:fs/promises';
import { dirname, join, resolve, sep } from 'node:path';

/**
 * Where uploaded bytes live. The app keeps only the key (in `uploads`), so any instance can read
 * what another wrote once the storage is shared (a network folder or an object store).
 */
export interface FileStorage {
  put(bytes: Uint8Array, options: { prefix: string; extension: string }): Promise<{ key: string; sha256: string; byteSize: number }>;
  get(key: string): Promise<Uint8Array | null>;
  remove(key: string): Promise<void>;
}

/** The default storage: a folder (git-ignored `.local/uploads` unless UPLOADS_DIR says otherwise). */
export function folderStorage(root: string): FileStorage {
  const base = resolve(root);
  const pathOf = (key: string) => {
    const path = resolve(base, key);
    if (!path.startsWith(base + sep)) throw new Error(`storage key escapes the folder: ${key}`);
    return path;
  };
  return {
    async put(bytes, { prefix, extension }) {
      const key = join(prefix, `${randomUUID()}.${extension}`);
      const path = pathOf(key);
      await mkdir(dirname(path), { recursive: true });
      await writeFile(path, bytes, { flag: 'wx' });
      return { key, sha256: createHash('sha256').update(bytes).digest('hex'), byteSize: bytes.byteLength };
    },
    async get(key) {
      try {
        return new Uint8Array(await readFile(pathOf(key)));
      } catch (error) {
        if ((error as NodeJS.ErrnoException).code === 'ENOENT') return null;
        throw error;
      }
    },
    async remove(key) {
      await rm(pathOf(key), { force: true });
    },
  };
}
