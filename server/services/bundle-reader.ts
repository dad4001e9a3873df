import type { Readable } from 'node:stream';
import yauzl from 'yauzl';
import type { z } from 'zod';
import { AppError, unprocessable } from '../http/errors';
import { unstorableText } from '../http/validate';

/**
 * A bundle's zip as the import reads it: which entries a bundle holds, the limits each is held
 * to, and a reader that checks the directory against them before expanding a byte and counts
 * every byte it expands. The export writes the same entries (bundle-export.ts).
 */

export const fileKey = (sha256: string) => `files/${sha256}`;
export const fileEntry = /^files\/([0-9a-f]{64})$/;

/**
 * What one import may hold. Sizes are those the rest of the app accepts: a file is one upload
 * (UPLOAD_MAX_MB), the model one save (the 2 MB JSON body limit of the API), the whole bundle
 * expands to no more than the zip the import route accepts (20 uploads' worth).
 */
export interface BundleLimits {
  /** Largest file, as an upload (default 60 MB). */
  maxFileBytes: number;
}

export const MB = 1024 * 1024;
/** model.json, and each revision's model in history.json: what a save accepts (2 MB body). */
export const maxModelBytes = 2 * MB;
/** sheets, comments, corrections, checks, activity and people: text records, many per project. */
const maxRecordsBytes = 16 * MB;
/**
 * Entries in one zip: the JSON entries and one per distinct file. A drawing set runs to a few
 * hundred files; reading a thousand directory records costs nothing, and a bundle over it is
 * refused before a byte is expanded.
 */
export const maxBundleEntries = 1000;
/**
 * How much an entry may expand over its compressed size. Deflate tops out near 1,032:1; the
 * files of an export are stored (1:1) and its pretty-printed JSON compresses 5–20:1. Entries
 * expanding to under 1 MB are not held to it (a few kilobytes of zeros harm no one).
 */
const maxRatio = 100;
const ratioFloorBytes = MB;

/** A refusal of a damaged or foreign bundle: nothing has been created. */
export const damaged = (why: string, details?: Record<string, unknown>) =>
  unprocessable(`This bundle cannot be imported: ${why}. Nothing was created.`, details);

const shortName = (name: string) => (name.length > 80 ? `${name.slice(0, 77)}…` : name);
export const megabytes = (n: number) => `${Number((n / MB).toFixed(1))} MB`;

/** The JSON entries and the largest each may be; those without `required` came with version 2. */
export const jsonEntries: Record<
  string,
  { maxBytes: (l: BundleLimits) => number; required?: true }
> = {
  'manifest.json': { maxBytes: () => maxRecordsBytes, required: true },
  'model.json': { maxBytes: () => maxModelBytes, required: true },
  'sheets.json': { maxBytes: () => maxRecordsBytes, required: true },
  'corrections.json': { maxBytes: () => maxRecordsBytes, required: true },
  'comments.json': { maxBytes: () => maxRecordsBytes, required: true },
  // Every revision holds a whole model: as large as one upload.
  'history.json': { maxBytes: (l) => l.maxFileBytes },
  'checks.json': { maxBytes: () => maxRecordsBytes },
  'activity.json': { maxBytes: () => maxRecordsBytes },
  'people.json': { maxBytes: () => maxRecordsBytes },
};

/**
 * An open bundle: its directory, read and checked against the limits before any entry is
 * expanded, and a way to stream an entry that counts every byte. `close` ends every stream
 * still open and resolves once the zip's file descriptor is closed.
 */
export interface OpenBundle {
  entries: Map<string, yauzl.Entry>;
  read(name: string, onChunk: (chunk: Buffer) => unknown): Promise<void>;
  close(): Promise<void>;
}

function entryLimit(name: string, limits: BundleLimits): number | undefined {
  if (fileEntry.test(name)) return limits.maxFileBytes;
  return jsonEntries[name]?.maxBytes(limits);
}

export async function openBundle(file: string, limits: BundleLimits): Promise<OpenBundle> {
  const zip = await new Promise<yauzl.ZipFile>((resolve, reject) =>
    yauzl.open(
      file,
      // validateEntrySizes: a stream that expands past (or short of) its declared size errors.
      { lazyEntries: true, autoClose: false, strictFileNames: true, validateEntrySizes: true },
      (err, z) => (err || !z ? reject(damaged('it is not a readable zip file')) : resolve(z)),
    ),
  );
  const streams = new Set<Readable>();
  const closed = new Promise<void>((resolve) => zip.once('close', () => resolve()));
  // An error after a refusal (a read still in flight) has no one left to tell.
  zip.on('error', () => undefined);
  async function close() {
    for (const s of streams) s.destroy();
    zip.close();
    await closed;
  }

  const maxTotal = limits.maxFileBytes * 20;
  try {
    if (zip.entryCount > maxBundleEntries) {
      throw damaged(`it holds ${zip.entryCount} entries; the limit is ${maxBundleEntries}`, {
        entries: zip.entryCount,
        maxEntries: maxBundleEntries,
      });
    }
    const entries = await new Promise<Map<string, yauzl.Entry>>((resolve, reject) => {
      const found = new Map<string, yauzl.Entry>();
      let total = 0;
      zip.on('error', () => reject(damaged('the zip file is damaged')));
      zip.on('end', () => resolve(found));
      zip.on('entry', (e: yauzl.Entry) => {
        const name = e.fileName;
        if (name.endsWith('/')) return zip.readEntry(); // a folder, as some zip tools add
        const limit = entryLimit(name, limits);
        let refusal: AppError | undefined;
        if (limit === undefined)
          refusal = damaged(`it holds “${shortName(name)}”, which is not part of a bundle`);
        else if (found.has(name)) refusal = damaged(`it holds ${name} twice`);
        else if (e.isEncrypted()) refusal = damaged(`${name} is encrypted`);
        else if (e.compressionMethod !== 0 && e.compressionMethod !== 8)
          refusal = damaged(`${name} is compressed in a way we do not read`);
        else if (e.uncompressedSize > limit)
          refusal = damaged(
            `${name} expands to ${megabytes(e.uncompressedSize)}; the limit is ${megabytes(limit)}`,
            { entry: name, sizeBytes: e.uncompressedSize, limitBytes: limit },
          );
        else if (
          e.uncompressedSize > ratioFloorBytes &&
          e.uncompressedSize > maxRatio * e.compressedSize
        )
          refusal = damaged(
            `${name} expands ${Math.round(e.uncompressedSize / Math.max(1, e.compressedSize))} times over; the limit is ${maxRatio} times`,
            { entry: name, maxRatio },
          );
        else if ((total += e.uncompressedSize) > maxTotal)
          refusal = damaged(`it expands to over ${megabytes(maxTotal)}, the limit`, {
            limitBytes: maxTotal,
          });
        if (refusal) return reject(refusal);
        found.set(name, e);
        zip.readEntry();
      });
      zip.readEntry();
    });

    async function read(name: string, onChunk: (chunk: Buffer) => unknown) {
      const e = entries.get(name)!;
      const stream = await new Promise<Readable>((resolve, reject) =>
        zip.openReadStream(e, (err, s) =>
          err || !s ? reject(damaged(`${name} is damaged`)) : resolve(s),
        ),
      );
      streams.add(stream);
      let size = 0;
      try {
        // Events, not `for await`: yauzl's streams of stored (uncompressed) entries never end
        // under an async iterator, and the request would wait for ever.
        await new Promise<void>((resolve, reject) => {
          let failed = false;
          const fail = (err: unknown) => {
            if (failed) return;
            failed = true;
            stream.destroy();
            reject(err instanceof AppError ? err : damaged(`${name} is damaged`));
          };
          stream.on('error', fail);
          stream.on('end', () => failed || resolve());
          stream.on('data', (chunk: Buffer) => {
            size += chunk.length;
            // yauzl checks this too; counted here as well, so no entry writes past its size.
            if (size > e.uncompressedSize)
              return fail(damaged(`${name} is larger than its zip entry says`));
            stream.pause();
            Promise.resolve(onChunk(chunk)).then(() => failed || stream.resume(), fail);
          });
        });
      } finally {
        stream.destroy();
        streams.delete(stream);
      }
      if (size !== e.uncompressedSize) throw damaged(`${name} is shorter than its zip entry says`);
    }

    return { entries, read, close };
  } catch (err) {
    await close();
    throw err;
  }
}

export async function readJson<S extends z.ZodType>(
  bundle: OpenBundle,
  name: string,
  schema: S,
): Promise<z.output<S> | undefined> {
  if (!bundle.entries.has(name)) {
    if (jsonEntries[name]?.required) throw damaged(`${name} is missing`);
    return undefined;
  }
  const chunks: Buffer[] = [];
  await bundle.read(name, (chunk) => chunks.push(chunk));
  let json: unknown;
  try {
    json = JSON.parse(Buffer.concat(chunks).toString('utf8'));
  } catch {
    throw damaged(`${name} is not JSON`);
  }
  const parsed = schema.safeParse(json);
  if (!parsed.success) {
    const first = parsed.error.issues[0];
    const why = first ? `${first.path.join('.') || 'top'}: ${first.message}` : parsed.error.message;
    throw damaged(`${name} does not match the bundle format (${why})`);
  }
  const [unstorable] = unstorableText(parsed.data);
  if (unstorable) throw damaged(`${name} ${unstorable.message} at ${unstorable.path || 'top'}`);
  return parsed.data;
}
