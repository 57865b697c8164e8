// SPDX-License-Identifier: MIT
// Generates HL7 v2 messages for the differential test (tests/hl7/differential.sh):
// random segments, fields, repetitions, components and subcomponents with escape
// sequences, under the default and other delimiters, CR or LF terminators and
// 4- or 5-character MSH-2. Deterministic: a seeded generator (mulberry32, a
// common-practice 32-bit PRNG), so the same seed gives the same messages.
//
// Only escapes on whose meaning HL7 v2.5.1 section 2.7 and node-hl7-client
// agree are generated: \F\ \S\ \T\ \R\ \E\, \H\ \N\ (dropped), \Xhh..\ below
// 0x80, and unknown ones (kept as they are). Not generated, because the two
// readers differ by design: \.br\ and friends (syrinx gives a line break,
// node-hl7-client keeps the text), \Z..\ \C..\ \M..\ (syrinx keeps them,
// node-hl7-client drops them), \P\ with a truncation character, CRLF and
// empty segments (node-hl7-client would see "\nPID" as a segment name), and
// white space at the end of a segment (node-hl7-client trims every segment,
// HL7 keeps it as data).
//
// usage: node gen.js COUNT SEED OUTDIR   (writes messages.hl7 and messages.json)
'use strict';
const fs = require('fs');
const path = require('path');

const [count, seed, outdir] = [Number(process.argv[2] || 300), Number(process.argv[3] || 1),
  process.argv[4] || '.'];

function mulberry32(a) {
  return function () {
    a |= 0; a = (a + 0x6D2B79F5) | 0;
    let t = Math.imul(a ^ (a >>> 15), 1 | a);
    t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}
const rnd = mulberry32(seed);
const int = (n) => Math.floor(rnd() * n);
const pick = (a) => a[int(a.length)];

const DELIMS = [
  ['|', '^', '~', '\\', '&'],
  ['|', '^', '~', '\\', '&'],
  ['|', '^', '~', '\\', '&'],
  ['#', '$', '*', '!', '@'],
  ['|', '!', '%', '/', '+'],
  [';', ':', '=', '?', ','],
];
const IDS = ['PID', 'PV1', 'ORC', 'OBR', 'OBX', 'OBX', 'OBX', 'NTE', 'SPM', 'ZBG', 'EVN', 'NK1'];
const TEXT = 'abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789 .-_()\'"<>[]{}é°µ';

function hex2(n) { return n.toString(16).toUpperCase().padStart(2, '0'); }

function sub(d, trunc) {
  const [, , , e] = d;
  let s = '';
  const n = int(8);
  for (let i = 0; i < n; i++) {
    const r = rnd();
    if (r < 0.7) {
      let c = pick(TEXT);
      if (d.includes(c) || c === trunc) c = 'x';
      s += c;
    } else if (r < 0.9) {
      s += e + pick(['F', 'S', 'T', 'R', 'E', 'H', 'N']) + e;
    } else if (r < 0.96) {
      let h = '';
      const k = 1 + int(3);
      for (let j = 0; j < k; j++) h += hex2(int(128));
      s += e + 'X' + h + e;
    } else {
      s += e + pick(['Q', 'A', 'b', 'W']) + e; // unknown: kept as it is
    }
  }
  if (rnd() < 0.03) s += e + 'F'; // an unterminated escape at the end
  return s;
}

function join(n, sep, make) {
  const parts = [];
  for (let i = 0; i < n; i++) parts.push(make());
  return parts.join(sep);
}

function field(d, trunc) {
  const [, c, r, , s] = d;
  if (rnd() < 0.3) return '';
  if (rnd() < 0.05) return '""';
  return join(1 + int(3), r, () => join(1 + int(4), c, () => join(1 + int(3), s, () => sub(d, trunc))));
}

function message(k) {
  const d = pick(DELIMS);
  const five = rnd() < 0.2;
  let trunc = '';
  if (five) {
    for (const t of ['#', '`', '\'']) if (!d.includes(t)) { trunc = t; break; }
  }
  const [f, c, r, e, s] = d;
  const term = rnd() < 0.8 ? '\r' : '\n';
  const msh = ['MSH' + f + c + r + e + s + trunc, 'APP' + c + 'X', 'FAC', 'SYRINX', 'LAB',
    '2026031408' + String(10 + int(50)), '', 'ORU' + c + 'R01', 'MSG' + k, 'P', five ? '2.7' : '2.5.1'];
  if (rnd() < 0.3) msh.push('', '', '', '', '', '', rnd() < 0.5 ? 'UNICODE UTF-8' : '');
  const segs = [msh.join(f)];
  const n = 1 + int(10);
  for (let i = 0; i < n; i++) {
    const fields = [pick(IDS)];
    const m = int(16);
    for (let j = 0; j < m; j++) fields.push(field(d, trunc));
    segs.push(fields.join(f).replace(/[ \t]+$/, ''));
  }
  return segs.join(term) + term;
}

const messages = [];
for (let k = 1; k <= count; k++) messages.push(message(k));
fs.writeFileSync(path.join(outdir, 'messages.hl7'), messages.join(''), 'utf8');
fs.writeFileSync(path.join(outdir, 'messages.json'), JSON.stringify(messages), 'utf8');
