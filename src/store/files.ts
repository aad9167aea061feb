/**
 * File helpers for stored documents: names are checked before they reach a path, and writes
 * are atomic (temporary file in the same folder, fsync, rename, fsync of the folder), so a
 * crash leaves either the old document or the new one, never a torn file.
 */
import { randomBytes } from 'node:crypto';
import { promises as fs } from 'node:fs';
import path from 'node:path';

export const NAME_PATTERN = /^[a-z0-9][a-z0-9-]{0,63}$/;

export function isValidName(name: string): boolean {
  return NAME_PATTERN.test(name);
}

/** Path of a document in a folder; throws on a name that could escape it. */
export function documentPath(dir: string, name: string, ext = '.json'): string {
  if (!isValidName(name)) throw new Error(`refusing unsafe document name ${JSON.stringify(name)}`);
  return path.join(dir, name + ext);
}

export async function writeFileAtomic(file: string, content: string): Promise<void> {
  const dir = path.dirname(file);
  await fs.mkdir(dir, { recursive: true });
  const tmp = path.join(dir, `.${path.basename(file)}.${process.pid}.${randomBytes(6).toString('hex')}.tmp`);
  const handle = await fs.open(tmp, 'wx', 0o644);
  try {
    await handle.writeFile(content, 'utf8');
    await handle.sync();
  } finally {
    await handle.close();
  }
  try {
    await fs.rename(tmp, file);
  } catch (err) {
    await fs.rm(tmp, { force: true });
    throw err;
  }
  await syncDir(dir);
}

export async function removeFileDurable(file: string): Promise<boolean> {
  try {
    await fs.unlink(file);
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'ENOENT') return false;
    throw err;
  }
  await syncDir(path.dirname(file));
  return true;
}

async function syncDir(dir: string): Promise<void> {
  let h: fs.FileHandle | undefined;
  try {
    h = await fs.open(dir, 'r');
    await h.sync();
  } catch {
    // Some file systems do not allow fsync on a directory; the rename is still atomic.
  } finally {
    await h?.close();
  }
}

/** Removes temporary files left by an interrupted write. */
export async function removeStaleTemps(dir: string): Promise<void> {
  let entries: string[];
  try {
    entries = await fs.readdir(dir);
  } catch {
    return;
  }
  await Promise.all(entries.filter((e) => e.startsWith('.') && e.endsWith('.tmp')).map((e) => fs.rm(path.join(dir, e), { force: true })));
}
