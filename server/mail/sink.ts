import { mkdirSync, readdirSync, readFileSync, statSync } from 'node:fs';
import { writeFile } from 'node:fs/promises';
import path from 'node:path';
import type { AddressInfo } from 'node:net';
import { SMTPServer } from 'smtp-server';

export interface MailSink {
  port: number;
  dir: string;
  close(): Promise<void>;
}

/**
 * The local stand-in for a mail service: an SMTP server on 127.0.0.1 that writes every
 * message it receives to `dir` as an .eml file. Port 0 picks a free port (tests).
 */
export async function startMailSink(options: { port: number; dir: string }): Promise<MailSink> {
  mkdirSync(options.dir, { recursive: true });
  let sequence = 0;
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS'],
    logger: false,
    onData(stream, _session, callback) {
      const chunks: Buffer[] = [];
      stream.on('data', (c: Buffer) => chunks.push(c));
      stream.on('end', () => {
        sequence += 1;
        const name = `${new Date().toISOString().replace(/[:.]/g, '-')}-${process.pid}-${sequence}.eml`;
        writeFile(path.join(options.dir, name), Buffer.concat(chunks)).then(
          () => callback(),
          callback,
        );
      });
    },
  });
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(options.port, '127.0.0.1', () => resolve());
  });
  const port = (server.server.address() as AddressInfo).port;
  return {
    port,
    dir: options.dir,
    close: () => new Promise((resolve) => server.close(() => resolve())),
  };
}

export interface StoredMail {
  file: string;
  receivedAt: string;
  to: string;
  subject: string;
  body: string;
}

/** Decodes RFC 2047 encoded words (`=?UTF-8?Q?…?=`, `=?UTF-8?B?…?=`) in a header. */
function decodeWords(value: string): string {
  return value
    .replace(/\?=\s+=\?/g, '?==?')
    .replace(
      /=\?([\w-]+)\?([QB])\?([^?]*)\?=/gi,
      (_m, _charset: string, enc: string, text: string) => {
        if (enc.toUpperCase() === 'B') return Buffer.from(text, 'base64').toString('utf8');
        const bytes = text
          .replace(/_/g, ' ')
          .replace(/=([0-9A-F]{2})/gi, (_x, hex: string) => String.fromCharCode(parseInt(hex, 16)));
        return Buffer.from(bytes, 'latin1').toString('utf8');
      },
    );
}

function header(raw: string, name: string): string {
  const match = raw.match(new RegExp(`^${name}:\\s*(.*(?:\\r?\\n[ \\t].*)*)`, 'im'));
  const value = match?.[1];
  return value === undefined ? '' : decodeWords(value.replace(/\r?\n[ \t]+/g, ' ').trim());
}

/** Decodes the quoted-printable bodies nodemailer writes for plain-text mail. */
function decodeBody(raw: string): string {
  const split = raw.search(/\r?\n\r?\n/);
  const body = split < 0 ? '' : raw.slice(split).trim();
  if (!/quoted-printable/i.test(header(raw, 'Content-Transfer-Encoding'))) return body;
  const bytes = body
    .replace(/=\r?\n/g, '')
    .replace(/=([0-9A-F]{2})/gi, (_m, hex: string) => String.fromCharCode(parseInt(hex, 16)));
  return Buffer.from(bytes, 'latin1').toString('utf8');
}

/** The messages in a sink folder, newest first. */
export function readMailbox(dir: string): StoredMail[] {
  let files: string[] = [];
  try {
    files = readdirSync(dir).filter((f) => f.endsWith('.eml'));
  } catch {
    return [];
  }
  return files
    .map((file) => {
      const full = path.join(dir, file);
      const raw = readFileSync(full, 'utf8');
      return {
        file,
        receivedAt: statSync(full).mtime.toISOString(),
        to: header(raw, 'To'),
        subject: header(raw, 'Subject'),
        body: decodeBody(raw),
      };
    })
    .sort((a, b) => b.file.localeCompare(a.file));
}
