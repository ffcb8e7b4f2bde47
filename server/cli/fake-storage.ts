import { startFakeObjectStore } from '../modules/storage/fake-object-store';
import { toolSettings } from '../env';

// Runs the local fake S3-compatible object store (started by `npm start` and `npm test`).
// Port from FAKE_STORAGE_PORT, files under FAKE_STORAGE_DIR (default .data/objects, git-ignored).
const settings = toolSettings();
const store = await startFakeObjectStore({
  port: settings.FAKE_STORAGE_PORT,
  dir: settings.FAKE_STORAGE_DIR,
});
console.log(`fake object store: http://127.0.0.1:${store.port} (files in ${store.dir})`);
const stop = () => void store.close().then(() => process.exit(0));
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
