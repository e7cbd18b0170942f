import exifr from 'exifr';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { applyMigrations } from '../../src/db/migrations';
import { findPhotoForViewer, insertPhotoUpload } from '../../src/db/photos.queries';
import { clubMemberships, clubs, harvestEntries, harvestQuantities, parcels, permits, species, users } from '../../src/db/schema';
import { createThrowawayDatabase, migrationsFolder, type ThrowawayDatabase } from './throwaway-database';
import { webpExifPayload } from '../../src/lib/photo-bytes';
import { maxPhotoBytes, originalPrefixFor, processPhoto, readPhotoPart, sharedKeyFor } from '../../src/server/photo-processing';

/**
 * 43°57′0″ N, 72°51′18″ W written as EXIF GPS rationals (degrees, minutes, seconds), as a phone does
 * (EXIF 2.32, GPS IFD tags GPSLatitude/GPSLongitude with their N/S, E/W references).
 * 43 + 57/60 = 43.95; 72 + 51/60 + 18/3600 = 72.855 (exact arithmetic).
 */
const gpsExif = {
  IFD3: { GPSLatitudeRef: 'N', GPSLatitude: '43/1 57/1 0/1', GPSLongitudeRef: 'W', GPSLongitude: '72/1 51/1 18/1' },
};

const canvas = (width: number, height: number) =>
  sharp({ create: { width, height, channels: 3, background: { r: 60, g: 90, b: 40 } } });

describe('processPhoto (real sharp and exifr, no stubs)', () => {
  it('given a JPEG with EXIF GPS, it reads the position from the original and the shared copy carries none', async () => {
    const original = await canvas(16, 12).jpeg().withExif(gpsExif).toBuffer();
    // The fixture itself: exifr reads back what was written.
    const fromOriginal = await exifr.gps(original);
    expect(fromOriginal.latitude).toBeCloseTo(43.95, 9);
    expect(fromOriginal.longitude).toBeCloseTo(-72.855, 9);

    const processed = await processPhoto(original);
    expect(processed.contentType).toBe('image/jpeg');
    expect(processed.gps?.latitude).toBeCloseTo(43.95, 9);
    expect(processed.gps?.longitude).toBeCloseTo(-72.855, 9);

    expect(processed.sharedContentType).toBe('image/jpeg');
    expect(await exifr.gps(processed.shared)).toBeUndefined();
    const meta = await sharp(processed.shared).metadata();
    expect(meta.format).toBe('jpeg');
    expect(meta.exif).toBeUndefined();
    expect(meta.xmp).toBeUndefined();
    expect([meta.width, meta.height]).toEqual([16, 12]);
  });

  it('given a sideways photo (EXIF orientation 6), it stands the shared copy upright', async () => {
    const original = await canvas(16, 12).jpeg().withMetadata({ orientation: 6 }).toBuffer();
    expect((await sharp(original).metadata()).orientation).toBe(6);
    const { shared } = await processPhoto(original);
    const meta = await sharp(shared).metadata();
    // Orientation 6 is "rotate 90° clockwise to display" (EXIF 2.32, tag 0x0112): 16×12 becomes 12×16.
    expect([meta.width, meta.height]).toEqual([12, 16]);
    expect(meta.orientation).toBeUndefined();
  });

  it('given a photo without GPS, it answers gps null', async () => {
    const processed = await processPhoto(await canvas(8, 8).png().toBuffer());
    expect(processed.contentType).toBe('image/png');
    expect(processed.gps).toBeNull();
    expect(processed.sharedContentType).toBe('image/jpeg');
  });

  it('given a WebP with EXIF GPS, it keeps WebP for the shared copy and drops the GPS', async () => {
    const original = await canvas(8, 8).webp().withExif(gpsExif).toBuffer();
    const processed = await processPhoto(original);
    expect(processed.contentType).toBe('image/webp');
    expect(processed.gps?.latitude).toBeCloseTo(43.95, 9);
    expect(processed.sharedContentType).toBe('image/webp');
    // exifr 7 does not read WebP itself; the EXIF chunk is where WebP keeps GPS.
    expect(webpExifPayload(processed.shared)).toBeNull();
    expect((await sharp(processed.shared).metadata()).exif).toBeUndefined();
  });

  it('given a PDF or a text file named like a photo, it refuses with 415', async () => {
    await expect(processPhoto(new TextEncoder().encode('%PDF-1.7\n'))).rejects.toMatchObject({ status: 415, code: 'unsupported-media-type' });
    await expect(processPhoto(new TextEncoder().encode('not a photo'))).rejects.toMatchObject({ status: 415 });
  });

  it('given an HEIC file this server cannot decode, it refuses with 415 and says to send JPEG', async () => {
    const heicHead = new Uint8Array([0, 0, 0, 0x18, ...new TextEncoder().encode('ftypheic'), 0, 0, 0, 0, ...new TextEncoder().encode('mif1heic')]);
    await expect(processPhoto(heicHead)).rejects.toMatchObject({ status: 415, message: expect.stringContaining('JPEG') });
  });

  it('given bytes that start like a JPEG but are not one, it refuses with 400', async () => {
    await expect(processPhoto(new Uint8Array([0xff, 0xd8, 0xff, 0xe0, 1, 2, 3, 4]))).rejects.toMatchObject({ status: 400, field: 'photo' });
  });

  it('given more than 10 MB, it refuses with 413', async () => {
    await expect(processPhoto(new Uint8Array(maxPhotoBytes + 1))).rejects.toMatchObject({ status: 413 });
  });

  it('given the layout of the two copies, it derives the shared key from the original key', () => {
    const sharedKey = 'photos/shared/0b7f2c1e-8a7d-4c3b-9e2f-1a2b3c4d5e6f.jpg';
    const prefix = originalPrefixFor(sharedKey);
    expect(prefix).toBe('photos/original/0b7f2c1e-8a7d-4c3b-9e2f-1a2b3c4d5e6f');
    expect(sharedKeyFor(`${prefix}/5d6e7f80-1111-4222-8333-944455556666.heic`, 'image/heic')).toBe(sharedKey);
    expect(sharedKeyFor(`${prefix}/5d6e7f80-1111-4222-8333-944455556666.webp`, 'image/webp')).toBe(sharedKey.replace('.jpg', '.webp'));
    expect(sharedKeyFor('boundaries/x.geojson', 'image/jpeg')).toBeNull();
  });
});

describe('readPhotoPart', () => {
  /** A body stream that counts what is read from it; highWaterMark 0, so nothing is pulled unasked. */
  function countingBody(chunkBytes: number, chunks: number) {
    const read = { bytes: 0 };
    let sent = 0;
    const stream = new ReadableStream<Uint8Array>(
      {
        pull(controller) {
          if (sent === chunks) return controller.close();
          sent += 1;
          read.bytes += chunkBytes;
          controller.enqueue(new Uint8Array(chunkBytes));
        },
      },
      { highWaterMark: 0 },
    );
    return { stream, read };
  }
  const multipartType = 'multipart/form-data; boundary=tallywood';
  const post = (body: BodyInit | ReadableStream<Uint8Array>, headers: Record<string, string>) =>
    new Request('http://127.0.0.1/api/photos', { method: 'POST', headers, body, duplex: 'half' } as RequestInit);

  it('given a content-length over the cap, it refuses with 413 before reading the body', async () => {
    const { stream, read } = countingBody(1024, 4);
    const request = post(stream, { 'content-type': multipartType, 'content-length': String(maxPhotoBytes * 2) });
    await expect(readPhotoPart(request)).rejects.toMatchObject({ status: 413, field: 'photo' });
    expect(read.bytes).toBe(0);
  });

  it('given a body without a length that runs past the cap, it stops reading just past the cap and refuses with 413', async () => {
    const { stream, read } = countingBody(1024 * 1024, 40);
    await expect(readPhotoPart(post(stream, { 'content-type': multipartType }))).rejects.toMatchObject({ status: 413 });
    expect(read.bytes).toBeLessThanOrEqual(maxPhotoBytes + 2 * 1024 * 1024);
  });

  it('given a form with the photo, it answers its bytes; without one a 400, and not multipart a 415, each naming the field', async () => {
    const jpeg = await canvas(4, 4).jpeg().toBuffer();
    const form = new FormData();
    form.set('photo', new File([new Uint8Array(jpeg)], 'ramps.jpg', { type: 'image/jpeg' }));
    const sent = new Request('http://127.0.0.1/api/photos', { method: 'POST', body: form });
    expect(Buffer.from(await readPhotoPart(sent)).equals(jpeg)).toBe(true);

    const empty = new FormData();
    empty.set('note', 'no photo');
    await expect(readPhotoPart(new Request('http://127.0.0.1/api/photos', { method: 'POST', body: empty }))).rejects.toMatchObject({ status: 400, field: 'photo' });
    await expect(readPhotoPart(post('{}', { 'content-type': 'application/json' }))).rejects.toMatchObject({ status: 415, code: 'unsupported-media-type', field: 'photo' });
  });
});

describe('findPhotoForViewer (real PostgreSQL)', () => {
  let throwaway: ThrowawayDatabase | undefined;
  const db = () => {
    if (!throwaway) throw new Error('the throwaway database was not created');
    return throwaway.db;
  };
  const ids = { forager: '', landowner: '', stranger: '', steward: '', member: '', photo: '', unattached: '', clubPhoto: '', borrowed: '' };
  const square = { type: 'MultiPolygon', coordinates: [[[[-72.86, 43.94], [-72.85, 43.94], [-72.85, 43.95], [-72.86, 43.95], [-72.86, 43.94]]]] };

  beforeAll(async () => {
    throwaway = await createThrowawayDatabase('tallywood_photos');
    await applyMigrations(throwaway.db, migrationsFolder);
    const people = await db()
      .insert(users)
      .values([
        { email: 'forager@example.org', roles: ['forager'] },
        { email: 'landowner@example.org', roles: ['forager', 'landowner'] },
        { email: 'stranger@example.org', roles: ['forager', 'landowner'] },
        { email: 'steward@example.org', roles: ['forager'] },
        { email: 'member@example.org', roles: ['forager'] },
      ])
      .returning({ id: users.id, email: users.email });
    const id = (email: string) => people.find((p) => p.email === email)?.id ?? '';
    ids.forager = id('forager@example.org');
    ids.landowner = id('landowner@example.org');
    ids.stranger = id('stranger@example.org');
    ids.steward = id('steward@example.org');
    ids.member = id('member@example.org');
    const [parcel] = await db()
      .insert(parcels)
      .values({ ownerId: ids.landowner, name: 'North slope', boundary: square, areaM2: 900_000, timeZone: 'America/New_York' })
      .returning({ id: parcels.id });
    const [ramps] = await db()
      .insert(species)
      .values({ slug: 'ramps', scientificName: 'Allium tricoccum', commonName: 'Ramps', kind: 'leaf', usualUnit: 'g' })
      .returning({ id: species.id });
    const upload = (n: number) =>
      insertPhotoUpload(db(), { ownerId: ids.forager, storageKey: `photos/original/${n}`, contentType: 'image/jpeg', byteSize: 3, sha256: 'x' });
    ids.photo = (await upload(1)).id;
    ids.unattached = (await upload(2)).id;
    const [entry] = await db()
      .insert(harvestEntries)
      .values({
        idempotencyKey: 'photo-test-1',
        foragerId: ids.forager,
        parcelId: parcel?.id ?? '',
        speciesId: ramps?.id ?? '',
        method: 'cut',
        localDate: '2026-05-01',
        countedOn: '2026-05-01',
        seasonStart: '2026-04-15',
        seasonEnd: '2026-05-31',
        photoUploadId: ids.photo,
        recordedBy: ids.forager,
      })
      .returning({ id: harvestEntries.id });
    if (!entry) throw new Error('the entry was not inserted');
    await db().insert(harvestQuantities).values({ entryId: entry.id, measure: 'mass', quantity: '100', unit: 'g', baseQuantity: '100' });

    // A club holds a permit on the parcel: its steward sees the entries made under it; a plain member does not.
    const [club] = await db().insert(clubs).values({ slug: 'valley-foragers', name: 'Valley Foragers' }).returning({ id: clubs.id });
    await db().insert(clubMemberships).values([
      { clubId: club?.id ?? '', userId: ids.steward, role: 'steward', state: 'active' },
      { clubId: club?.id ?? '', userId: ids.member, role: 'member', state: 'active' },
      { clubId: club?.id ?? '', userId: ids.forager, role: 'member', state: 'active' },
    ]);
    const [permit] = await db()
      .insert(permits)
      .values({ parcelId: parcel?.id ?? '', holderClubId: club?.id ?? '', state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31' })
      .returning({ id: permits.id });
    ids.clubPhoto = (await upload(3)).id;
    ids.borrowed = (await upload(4)).id;
    const entryWith = async (key: string, foragerId: string, photoUploadId: string, permitId: string | null) => {
      const [row] = await db()
        .insert(harvestEntries)
        .values({
          idempotencyKey: key, foragerId, parcelId: parcel?.id ?? '', speciesId: ramps?.id ?? '', method: 'cut', localDate: '2026-05-02', countedOn: '2026-05-02',
          seasonStart: '2026-04-15', seasonEnd: '2026-05-31', photoUploadId, permitId, clubId: permitId ? (club?.id ?? null) : null, recordedBy: foragerId,
        })
        .returning({ id: harvestEntries.id });
      await db().insert(harvestQuantities).values({ entryId: row?.id ?? '', measure: 'mass', quantity: '50', unit: 'g', baseQuantity: '50' });
    };
    await entryWith('photo-test-club', ids.forager, ids.clubPhoto, permit?.id ?? null);
    // The stranger's own entry names the forager's photo: that must not open it to anyone.
    await entryWith('photo-test-borrowed', ids.stranger, ids.borrowed, permit?.id ?? null);
  });

  afterAll(async () => {
    await throwaway?.drop();
  });

  it('given the forager who uploaded it, it answers the original', async () => {
    expect(await findPhotoForViewer(db(), { uploadId: ids.photo, viewerId: ids.forager })).toMatchObject({ access: 'original', storageKey: 'photos/original/1' });
  });

  it('given the landowner of the parcel whose ledger references it, it answers the shared copy', async () => {
    expect(await findPhotoForViewer(db(), { uploadId: ids.photo, viewerId: ids.landowner })).toMatchObject({ access: 'shared' });
  });

  it('given another landowner, or the landowner and a photo on no entry of theirs, it answers null', async () => {
    expect(await findPhotoForViewer(db(), { uploadId: ids.photo, viewerId: ids.stranger })).toBeNull();
    expect(await findPhotoForViewer(db(), { uploadId: ids.unattached, viewerId: ids.landowner })).toBeNull();
  });

  it('given the active steward of the club whose permit the entry counts under, it answers the shared copy; a plain member of the club gets null', async () => {
    expect(await findPhotoForViewer(db(), { uploadId: ids.clubPhoto, viewerId: ids.steward })).toMatchObject({ access: 'shared' });
    expect(await findPhotoForViewer(db(), { uploadId: ids.clubPhoto, viewerId: ids.member })).toBeNull();
    // The steward's club has no permit behind the first entry (it counts under none): not theirs to see.
    expect(await findPhotoForViewer(db(), { uploadId: ids.photo, viewerId: ids.steward })).toBeNull();
  });

  it("given an entry of someone else's that names the forager's photo, it opens the photo to nobody but the forager", async () => {
    expect(await findPhotoForViewer(db(), { uploadId: ids.borrowed, viewerId: ids.landowner })).toBeNull();
    expect(await findPhotoForViewer(db(), { uploadId: ids.borrowed, viewerId: ids.steward })).toBeNull();
    expect(await findPhotoForViewer(db(), { uploadId: ids.borrowed, viewerId: ids.stranger })).toBeNull();
    expect(await findPhotoForViewer(db(), { uploadId: ids.borrowed, viewerId: ids.forager })).toMatchObject({ access: 'original' });
  });
});
