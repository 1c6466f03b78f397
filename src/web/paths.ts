import { fileURLToPath } from 'node:url';

export const VIEWS_DIR = fileURLToPath(new URL('../../views/', import.meta.url));
export const PUBLIC_DIR = fileURLToPath(new URL('./public/', import.meta.url));
