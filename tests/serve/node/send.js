// SPDX-License-Identifier: MIT
// Sends HL7 v2 messages to `syrinx serve` with node-hl7-client 3.x (a general
// MLLP client on the npm registry, used here only as a test peer that no one in
// this project wrote) and prints one JSON line per ACK it receives:
//   {"msa1": "AA", "msa2": "<MSA-2>", "raw": "<the ACK as the client read it>"}
// The messages come from a JSON array of strings (segments separated by CR).
//
// One message at a time: the next is handed to the client when the previous
// ACK has arrived. (node-hl7-client 3.2.0 spins forever when several messages
// wait in its own queue with waitAck on, so the queue is kept empty here.)
// Bounded: the run stops by itself after the timeout, exit status 1.
//
// usage: node send.js HOST PORT messages.json [timeout_ms]
'use strict';
const fs = require('fs');
const { Client, Message } = require('node-hl7-client');

const [host, portText, file, timeoutText] = process.argv.slice(2);
const port = Number(portText);
const timeoutMs = Number(timeoutText || 20000);
const texts = JSON.parse(fs.readFileSync(file, 'utf8'));
const acks = [];
let finished = false;
let waiter = null;

function finish(code) {
  if (finished) return;
  finished = true;
  for (const a of acks) process.stdout.write(JSON.stringify(a) + '\n');
  process.exit(code);
}

setTimeout(() => {
  process.stderr.write(
    `node-hl7-client: ${acks.length} of ${texts.length} ACKs in ${timeoutMs} ms; giving up\n`);
  finish(1);
}, timeoutMs);

const client = new Client({ host });
const outbound = client.createConnection({ port }, async (res) => {
  const w = waiter;
  waiter = null;
  if (w) w(res.getMessage());
  else process.stderr.write('node-hl7-client: an ACK that no message waited for\n');
});
outbound.on('client.error', (err) => {
  process.stderr.write(`node-hl7-client: ${err && err.message ? err.message : err}\n`);
  finish(1);
});
outbound.once('connect', async () => {
  try {
    for (const text of texts) {
      const answered = new Promise((resolve) => { waiter = resolve; });
      await outbound.sendMessage(new Message({ text }));
      const msg = await answered;
      acks.push({
        msa1: msg.get('MSA.1').toString(),
        msa2: msg.get('MSA.2').toString(),
        raw: msg.toString(),
      });
    }
    await outbound.close();
    finish(0);
  } catch (err) {
    process.stderr.write(`node-hl7-client: ${err && err.message ? err.message : err}\n`);
    finish(1);
  }
});
