import { startFakeMailServer } from '../modules/mail/fake-mail-server';
import { toolSettings } from '../env';

// Runs the local fake mail server (started by `npm start`). Ports from FAKE_SMTP_PORT / FAKE_MAIL_HTTP_PORT.
const settings = toolSettings();
const server = await startFakeMailServer({
  smtpPort: settings.FAKE_SMTP_PORT,
  httpPort: settings.FAKE_MAIL_HTTP_PORT,
  storeFile: settings.FAKE_MAIL_STORE,
});
console.log(
  `fake mail server: SMTP 127.0.0.1:${server.smtpPort}, mailbox http://127.0.0.1:${server.httpPort}/messages`,
);
const stop = () => void server.close().then(() => process.exit(0));
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
