// A local SMTP sink on loopback: accepts every message and stores it as an .eml file, so that
// invitations, password resets and session reports can be read in the app (admin) and by tests.
// Usage: node scripts/mail-sink.mjs <port> <folder>
import { mkdirSync, writeFileSync } from 'node:fs';
import { randomUUID } from 'node:crypto';
import path from 'node:path';
import { SMTPServer } from 'smtp-server';

const port = Number(process.argv[2]);
const folder = path.resolve(process.argv[3]);
mkdirSync(folder, { recursive: true });

const server = new SMTPServer({
	authOptional: true,
	disabledCommands: ['STARTTLS', 'AUTH'],
	banner: 'Shotwright local mail sink',
	size: 10 * 1024 * 1024,
	onData(stream, _session, callback) {
		const chunks = [];
		stream.on('data', (c) => chunks.push(c));
		stream.on('end', () => {
			const name = `${new Date().toISOString().replace(/[:.]/g, '-')}-${randomUUID().slice(0, 8)}.eml`;
			writeFileSync(path.join(folder, name), Buffer.concat(chunks));
			callback();
		});
	}
});
server.on('error', (err) => {
	console.error(`mail sink: ${err.message}`);
	process.exit(1);
});
server.listen(port, '127.0.0.1');
for (const signal of ['SIGTERM', 'SIGINT']) process.on(signal, () => server.close(() => process.exit(0)));
