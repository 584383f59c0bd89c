/** SHA-256 of input files, streamed, for the run summary. */
import { createHash } from 'node:crypto';
import { createReadStream } from 'node:fs';

/** Hex SHA-256 of a file's bytes. */
export async function sha256File(path: string): Promise<string> {
  const hash = createHash('sha256');
  for await (const chunk of createReadStream(path)) hash.update(chunk as Buffer);
  return hash.digest('hex');
}
