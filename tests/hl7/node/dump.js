// SPDX-License-Identifier: MIT
// Prints each message of a JSON array of HL7 v2 messages as node-hl7-client
// 3.x parses it, one JSON line per message, in the layout of tests/hl7/hl7dump.c:
// segments [id, field1, ...]; MSH-1 and MSH-2 as strings; other fields as
// arrays of repetitions of components of subcomponents (unescaped strings);
// empty ones as []. Used by tests/hl7/differential.sh.
//
// usage: node dump.js messages.json
'use strict';
const fs = require('fs');
const { Message } = require('node-hl7-client');

function children(node) {
  // a node's parts; an empty node has none
  return node.toRaw() === '' ? [] : node.toArray();
}

function dumpField(field) {
  return children(field).map((rep) =>
    children(rep).map((comp) => children(comp).map((s) => s.toString())));
}

const messages = JSON.parse(fs.readFileSync(process.argv[2], 'utf8'));
const out = [];
for (const text of messages) {
  const m = new Message({ text });
  const line = [];
  for (const seg of m.toArray()) {
    const parts = seg.toArray();
    const name = parts[0].toRaw();
    const row = [name];
    if (name === 'MSH') {
      row.push(m.delimiters[1]);
      row.push(parts[1].toRaw());
      for (let i = 2; i < parts.length; i++) row.push(dumpField(parts[i]));
    } else {
      for (let i = 1; i < parts.length; i++) row.push(dumpField(parts[i]));
    }
    line.push(row);
  }
  out.push(JSON.stringify(line));
}
process.stdout.write(out.join('\n') + '\n');
