import { UPLOADS_DIR } from 'astro:env/server';
import { folderStorage } from './storage';

/** The app's upload storage. */
export const uploadStorage = folderStorage(UPLOADS_DIR);
