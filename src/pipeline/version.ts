/** pondage's version, from package.json (one source). */
import { createRequire } from 'node:module';

const pkg = createRequire(import.meta.url)('../../package.json') as { version: string };

/** The version written into every output. */
export const TOOL_VERSION: string = pkg.version;
