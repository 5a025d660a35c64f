// Local stand-in for an SMTP relay, for development and tests only.
//
// SMTP on 127.0.0.1:$SMTP_PORT accepts every message (no AUTH, no STARTTLS:
// Auth.js's e-mail provider always sends an empty `auth`, which fails against
// a server that advertises AUTH), parses it with mailparser and keeps it in
// memory. HTTP on 127.0.0.1:$MAIL_FAKE_HTTP_PORT serves what was received:
//   GET    /messages  → [{ id, to, from, subject, text, html, date }], newest first
//   DELETE /messages  → clears the list
// A real relay replaces this by the SMTP_* variables alone; nothing in the app
// knows it talks to a fake.
import { createServer } from 'node:http';
import { SMTPServer } from 'smtp-server';
import { simpleParser } from 'mailparser';

const HOST = '127.0.0.1';
const smtpPort = Number(process.env.SMTP_PORT ?? 2525);
const httpPort = Number(process.env.MAIL_FAKE_HTTP_PORT ?? 2580);
/** Keep memory bounded in a long `npm start` session. */
const MAX_MESSAGES = 1000;

/** @type {{ id: number, to: string[], from: string, subject: string, text: string, html: string, date: string }[]} */
let messages = [];
let nextId = 1;

function addresses(field) {
	if (!field) return [];
	const list = Array.isArray(field) ? field : [field];
	return list.flatMap((a) => a.value.map((v) => v.address ?? '')).filter(Boolean);
}

const smtp = new SMTPServer({
	authOptional: true,
	disabledCommands: ['AUTH', 'STARTTLS'],
	banner: 'Spanline mail fake',
	size: 10 * 1024 * 1024,
	logger: false,
	onData(stream, session, callback) {
		simpleParser(stream)
			.then((mail) => {
				const envelopeTo = session.envelope.rcptTo.map((r) => r.address);
				messages.unshift({
					id: nextId++,
					to: envelopeTo.length ? envelopeTo : addresses(mail.to),
					from: addresses(mail.from)[0] ?? session.envelope.mailFrom?.address ?? '',
					subject: mail.subject ?? '',
					text: mail.text ?? '',
					html: typeof mail.html === 'string' ? mail.html : '',
					date: (mail.date ?? new Date()).toISOString()
				});
				if (messages.length > MAX_MESSAGES) messages.length = MAX_MESSAGES;
				callback();
			})
			.catch((err) => callback(err));
	}
});
smtp.on('error', (err) => console.error('mail fake SMTP error:', err.message));

const http = createServer((req, res) => {
	const url = new URL(req.url ?? '/', `http://${HOST}`);
	if (url.pathname !== '/messages') {
		res.writeHead(404, { 'content-type': 'application/json' }).end('{"error":"not found"}');
		return;
	}
	if (req.method === 'GET') {
		res.writeHead(200, { 'content-type': 'application/json' }).end(JSON.stringify(messages));
	} else if (req.method === 'DELETE') {
		messages = [];
		res.writeHead(204).end();
	} else {
		res.writeHead(405, { allow: 'GET, DELETE' }).end();
	}
});

function listen(server, port) {
	return new Promise((resolve, reject) => {
		server.once('error', reject);
		server.listen(port, HOST, () => {
			server.off('error', reject);
			resolve();
		});
	});
}

try {
	await Promise.all([listen(smtp.server, smtpPort), listen(http, httpPort)]);
} catch (err) {
	console.error(`mail fake could not listen: ${err.message}`);
	process.exit(1);
}
console.log(`mail fake ready: SMTP ${HOST}:${smtpPort}, messages at http://${HOST}:${httpPort}/messages`);

function shutdown() {
	http.close();
	smtp.close(() => process.exit(0));
	// smtp.close waits for open connections; do not hang the caller.
	setTimeout(() => process.exit(0), 2000).unref();
}
process.on('SIGTERM', shutdown);
process.on('SIGINT', shutdown);
