import mime from 'mime-types';

/** Longest original name kept, in characters (the extension is kept whole when it is short). */
export const maxFileNameLength = 120;

// C0 and C1 controls (NUL included) and the bidirectional overrides that can make
// "gpj.exe" read as "exe.jpg".
const UNSAFE = /[\u0000-\u001f\u007f-\u009f\u200e\u200f\u202a-\u202e\u2066-\u2069]/g;

/**
 * An uploaded file's name made safe to keep as metadata and to show: only the last path part
 * (either slash), no control characters, no leading dots or trailing dots and spaces, at most
 * `maxFileNameLength` characters. Never used to name anything on disk.
 *
 * @example sanitiseFileName('../../etc/passwd.png') // 'passwd.png'
 */
export function sanitiseFileName(raw: string, fallback = 'untitled'): string {
  let name = raw.normalize('NFC').replace(UNSAFE, '');
  name = name.split(/[\\/]/).pop() ?? '';
  name = name
    .replace(/\s+/g, ' ')
    .replace(/^[\s.]+/, '')
    .replace(/[\s.]+$/, '');
  const chars = Array.from(name);
  if (chars.length > maxFileNameLength) {
    const dot = name.lastIndexOf('.');
    const ext = dot > 0 ? Array.from(name.slice(dot)) : [];
    const keep = ext.length > 0 && ext.length <= 10 ? ext : [];
    name =
      chars
        .slice(0, maxFileNameLength - keep.length)
        .join('')
        .trimEnd() + keep.join('');
  }
  return name || fallback;
}

/** The name without its extension, for a default sheet title. */
export function fileStem(name: string): string {
  const dot = name.lastIndexOf('.');
  return dot > 0 ? name.slice(0, dot) : name;
}

/**
 * The name to hand a file back under: its kept name, with the extension of what the bytes are
 * when the name says otherwise, so the builder's computer opens it with the right program.
 *
 * @example downloadName('drawing.pdf', 'image/png') // 'drawing.png'
 */
export function downloadName(name: string, mimeType: string): string {
  if (mime.lookup(name) === mimeType) return name;
  const ext = mime.extension(mimeType);
  return ext ? `${fileStem(name)}.${ext}` : name;
}
