import { describe, expect, it } from 'vitest';
import { downloadName, sanitiseFileName } from '../../../../server/storage/file-name';

describe('downloadName: the extension follows the bytes (types and extensions from mime-types)', () => {
  it.each([
    // Names that already say what the bytes are stay as they are, in any case.
    ['plate.pdf', 'application/pdf', 'plate.pdf'],
    ['Frame photo.JPG', 'image/jpeg', 'Frame photo.JPG'],
    ['frame.jpeg', 'image/jpeg', 'frame.jpeg'],
    ['scan.tiff', 'image/tiff', 'scan.tiff'],
    // The others take the type's extension in place of their own.
    ['drawing.pdf', 'image/png', 'drawing.png'],
    ['photo.jpg', 'application/pdf', 'photo.pdf'],
    ['scan.tif', 'image/jpeg', 'scan.jpg'],
    ['untitled', 'image/tiff', 'untitled.tif'],
  ])('%s holding %s is handed back as %s', (name, type, want) => {
    expect(downloadName(name, type)).toBe(want);
  });
});

describe('sanitiseFileName', () => {
  it.each([
    ['../../etc/passwd.png', 'passwd.png'],
    ['..\\..\\windows\\frame.png', 'frame.png'],
    ['../..', 'untitled'],
    ['plate\u0000.pdf', 'plate.pdf'],
    ['exe\u202e.jpg', 'exe.jpg'],
    ['  ..hidden.png  ', 'hidden.png'],
  ])('%j is kept as %j', (raw, want) => {
    expect(sanitiseFileName(raw)).toBe(want);
  });
});
