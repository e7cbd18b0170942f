import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { folderStorage, type FileStorage } from '../../src/server/storage';

describe('folder storage', () => {
  let dir: string;
  let storage: FileStorage;
  beforeAll(async () => {
    dir = await mkdtemp(join(tmpdir(), 'tallywood-storage-'));
    storage = folderStorage(dir);
  });
  afterAll(async () => rm(dir, { recursive: true, force: true }));

  it('given bytes, it stores them under a fresh key and reads the same bytes back', async () => {
    const bytes = new TextEncoder().encode('abc');
    const stored = await storage.put(bytes, { prefix: 'photos', extension: 'jpg' });
    expect(stored.key).toMatch(/^photos\/[0-9a-f-]{36}\.jpg$/);
    expect(stored.byteSize).toBe(3);
    // SHA-256("abc"), FIPS 180-2 Appendix B.1 example.
    expect(stored.sha256).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
    expect(await storage.get(stored.key)).toEqual(bytes);
  });

  it('given a removed or unknown key, it answers null', async () => {
    const stored = await storage.put(new Uint8Array([1, 2]), { prefix: 'x', extension: 'bin' });
    await storage.remove(stored.key);
    expect(await storage.get(stored.key)).toBeNull();
  });

  it('given a key that climbs out of the folder, it refuses', async () => {
    await expect(storage.get('../../etc/passwd')).rejects.toThrow('escapes the folder');
  });
});
