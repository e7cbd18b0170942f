import { describe, expect, it } from 'vitest';
import { sniffImageType, webpExifPayload } from '../../src/lib/photo-bytes';

const bytes = (...values: number[]) => new Uint8Array(values);
const ascii = (text: string) => new TextEncoder().encode(text);
const concat = (...parts: Uint8Array[]) => {
  const out = new Uint8Array(parts.reduce((n, p) => n + p.length, 0));
  let at = 0;
  for (const p of parts) (out.set(p, at), (at += p.length));
  return out;
};

describe('sniffImageType', () => {
  it('given a JPEG SOI marker followed by a marker (ITU-T T.81 Annex B), it answers image/jpeg', () => {
    expect(sniffImageType(bytes(0xff, 0xd8, 0xff, 0xe0, 0x00, 0x10))).toBe('image/jpeg');
    expect(sniffImageType(bytes(0xff, 0xd8, 0xff, 0xe1))).toBe('image/jpeg');
  });

  it('given the PNG signature 89 50 4E 47 0D 0A 1A 0A (PNG spec §5.2), it answers image/png', () => {
    expect(sniffImageType(bytes(0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13))).toBe('image/png');
  });

  it('given RIFF, a chunk size and WEBP (RFC 9649), it answers image/webp', () => {
    expect(sniffImageType(concat(ascii('RIFF'), bytes(0x3c, 0, 0, 0), ascii('WEBPVP8 ')))).toBe('image/webp');
  });

  it('given an ftyp box with major brand heic or mif1 (ISO/IEC 14496-12 §4.3, ISO/IEC 23008-12), it answers image/heic', () => {
    expect(sniffImageType(concat(bytes(0, 0, 0, 0x18), ascii('ftypheic'), bytes(0, 0, 0, 0), ascii('mif1heic')))).toBe('image/heic');
    expect(sniffImageType(concat(bytes(0, 0, 0, 0x1c), ascii('ftypmif1'), bytes(0, 0, 0, 0), ascii('mif1heic')))).toBe('image/heic');
  });

  it('given a text file, a PDF or nothing, it answers null', () => {
    expect(sniffImageType(ascii('chanterelles, 2 lb, north slope\n'))).toBeNull();
    expect(sniffImageType(ascii('%PDF-1.7\n%âãÏÓ\n'))).toBeNull();
    expect(sniffImageType(new Uint8Array())).toBeNull();
  });

  it('given near misses — a RIFF that is not WebP, an ISO file of another brand, a cut-off signature — it answers null', () => {
    expect(sniffImageType(concat(ascii('RIFF'), bytes(0x24, 0, 0, 0), ascii('WAVEfmt ')))).toBeNull();
    expect(sniffImageType(concat(bytes(0, 0, 0, 0x1c), ascii('ftypavif'), bytes(0, 0, 0, 0), ascii('avifmif1')))).toBeNull();
    expect(sniffImageType(concat(bytes(0, 0, 0, 0x18), ascii('ftypisom')))).toBeNull();
    expect(sniffImageType(bytes(0x89, 0x50, 0x4e, 0x47))).toBeNull();
    expect(sniffImageType(bytes(0xff, 0xd8))).toBeNull();
    expect(sniffImageType(ascii('GIF89a'))).toBeNull();
  });
});

describe('webpExifPayload', () => {
  const chunk = (fourCC: string, data: Uint8Array) => {
    const head = concat(ascii(fourCC), bytes(data.length & 0xff, (data.length >> 8) & 0xff, 0, 0));
    return concat(head, data, data.length % 2 ? bytes(0) : new Uint8Array());
  };
  const webp = (...chunks: Uint8Array[]) => concat(ascii('RIFF'), bytes(0, 0, 0, 0), ascii('WEBP'), ...chunks);
  const tiff = concat(ascii('II'), bytes(0x2a, 0, 8, 0, 0, 0));

  it('given a WebP whose EXIF chunk follows an odd-sized chunk (RIFF pads to even), it answers the TIFF bytes', () => {
    const file = webp(chunk('VP8X', new Uint8Array(10)), chunk('ICCP', new Uint8Array(3)), chunk('EXIF', tiff));
    expect(webpExifPayload(file)).toEqual(tiff);
  });

  it('given an EXIF chunk that starts with the JPEG APP1 identifier Exif\\0\\0, it skips the identifier', () => {
    const file = webp(chunk('EXIF', concat(ascii('Exif'), bytes(0, 0), tiff)));
    expect(webpExifPayload(file)).toEqual(tiff);
  });

  it('given a WebP without EXIF, a truncated chunk or a JPEG, it answers null', () => {
    expect(webpExifPayload(webp(chunk('VP8 ', new Uint8Array(4))))).toBeNull();
    expect(webpExifPayload(webp(concat(ascii('EXIF'), bytes(0xff, 0, 0, 0), tiff)))).toBeNull();
    expect(webpExifPayload(bytes(0xff, 0xd8, 0xff, 0xe1))).toBeNull();
  });
});
