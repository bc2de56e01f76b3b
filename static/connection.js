// Connection is a page's websocket to one run or one pair: it connects,
// reconnects with a doubling back-off after a loss, numbers the commands
// it sends and remembers which are still unanswered. On a pair's socket
// (tagged) every message names its side: text arrives as {side, msg},
// binary messages carry the side in byte 3 (server/doc.go); the handlers
// get the side as their second argument ('' for the pair itself). Binary
// messages are handed on decoded (protocol.js); one that cannot be read
// is reported as a note and dropped.

import { decodeBinary, sideOf } from './protocol.js';

const FIRST_RETRY_MS = 500;
const LAST_RETRY_MS = 8000;

export class Connection {
  // path: the socket's path on this host. on: {open(), json(msg, side),
  // binary(msg, side) (a decoded geometry or frame), state(s) ('connecting' or 'disconnected'),
  // note(text, kind) (a line for the page's message area)}.
  constructor(path, on, { tagged = false } = {}) {
    this.path = path;
    this.on = on;
    this.tagged = tagged;
    this.ws = null;
    this.retry = FIRST_RETRY_MS;
    this.nextID = 1;
    this.pending = new Map(); // id → command
  }

  connect() {
    const proto = location.protocol === 'https:' ? 'wss' : 'ws';
    const ws = new WebSocket(`${proto}://${location.host}${this.path}`);
    ws.binaryType = 'arraybuffer';
    this.ws = ws;
    this.on.state('connecting');
    ws.onopen = () => {
      this.retry = FIRST_RETRY_MS;
      if (this.on.open) this.on.open();
    };
    ws.onmessage = (ev) => {
      if (typeof ev.data === 'string') {
        const m = JSON.parse(ev.data);
        if (this.tagged) this.on.json(m.msg, m.side || '');
        else this.on.json(m, '');
      } else {
        this.onBinary(ev.data);
      }
    };
    ws.onclose = (ev) => {
      if (this.ws !== ws) return;
      this.on.state('disconnected');
      this.on.note(ev.reason ? `Connection closed: ${ev.reason}. Reconnecting…` : 'Connection lost. Reconnecting…', 'info');
      setTimeout(() => this.connect(), this.retry);
      this.retry = Math.min(this.retry * 2, LAST_RETRY_MS);
    };
  }

  onBinary(buf) {
    let msg;
    try {
      msg = decodeBinary(buf);
    } catch (err) {
      this.on.note(`Could not read a message from the server: ${err.message}`, 'error');
      return;
    }
    this.on.binary(msg, this.tagged ? sideOf(buf) : '');
  }

  // send sends command cmd with its value (if any) to the run, or to one
  // side of a pair; it returns the command's id, or 0 when not connected.
  send(cmd, value, side) {
    if (!this.ws || this.ws.readyState !== WebSocket.OPEN) {
      this.on.note(`Not connected: “${cmd}” was not sent.`, 'error');
      return 0;
    }
    const id = this.nextID++;
    this.pending.set(id, cmd);
    const msg = { id, cmd };
    if (side) msg.side = side;
    if (value !== undefined) msg.value = value;
    this.ws.send(JSON.stringify(msg));
    return id;
  }

  // settle forgets command id (answered by an ack or an error); it reports
  // whether it was one of ours still waiting.
  settle(id) { return this.pending.delete(id); }
}
