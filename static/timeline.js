// The run page's timeline panel: save the record, mark a moment, load a
// timeline (a file or a built-in) and replay it. The server records and
// replays (server/timeline_run.go); this only sends commands and shows
// the "timeline" messages.

const $ = (role) => document.querySelector(`[data-role="${role}"]`);

// The websocket's limit for one command (server/ws.go maxClientMsg),
// less room for the JSON around the file's text.
const MAX_FILE = 60000;

export class TimelinePanel {
  // send(cmd, value) sends a command; show(text, kind) shows a message.
  constructor(send, show) {
    this.send = send;
    this.show = show;
    this.el = {
      panel: $('timeline-panel'), status: $('timeline-status'), mark: $('timeline-mark'), label: $('mark-label'),
      builtin: $('timeline-builtin'), file: $('timeline-file'), replay: $('timeline-replay'), stop: $('timeline-stop'),
    };
    this.builtins = '';
    this.lastMark = '';
    if (!this.el.panel) return;
    // A banner over the field for the mark a replay paused at, readable
    // from the back of a room.
    this.banner = document.createElement('div');
    this.banner.className = 'mark-banner';
    this.banner.dataset.role = 'mark-banner';
    this.banner.hidden = true;
    const wrap = document.querySelector('.canvas-wrap');
    if (wrap) wrap.append(this.banner);
    this.el.mark.addEventListener('click', () => this.markNow());
    this.el.label.addEventListener('keydown', (e) => { if (e.key === 'Enter') this.markNow(); });
    this.el.replay.addEventListener('click', () => this.replay());
    this.el.stop.addEventListener('click', () => this.send('stop-replay'));
    this.el.builtin.addEventListener('change', () => { this.el.file.hidden = this.el.builtin.value !== ''; });
  }

  markNow() {
    this.send('mark', this.el.label.value);
    this.el.label.value = '';
  }

  async replay() {
    const name = this.el.builtin.value;
    if (name) {
      this.send('replay', { builtin: name });
      return;
    }
    const f = this.el.file.files && this.el.file.files[0];
    if (!f) {
      this.show('Choose a timeline file (saved with “Save timeline”) or a built-in timeline first.', 'error');
      return;
    }
    if (f.size > MAX_FILE) {
      this.show(`${f.name} has ${f.size} bytes; the workbench takes timelines up to ${MAX_FILE} bytes. Replay it headless: gyrebench run ${f.name}`, 'error');
      return;
    }
    this.send('replay', { name: f.name, toml: await f.text() });
  }

  // update shows a "timeline" message.
  update(m) {
    if (!this.el.panel) return;
    const names = (m.builtins || []).join('\n');
    if (names !== this.builtins) {
      this.builtins = names;
      const keep = this.el.builtin.value;
      this.el.builtin.replaceChildren(new Option('a file…', ''));
      for (const n of m.builtins || []) this.el.builtin.append(new Option(`built-in: ${n}`, n));
      this.el.builtin.value = keep;
      this.el.file.hidden = this.el.builtin.value !== '';
    }
    const r = m.replay;
    let text;
    if (r) {
      text = `replaying ${r.name}: ${r.next} of ${r.total} events done, ends at step ${r.end_step}`;
      if (r.mark) text += ` · paused at the mark “${r.mark}”: press Play to go on`;
    } else if (m.full) {
      text = 'the record is full and can no longer be saved; reset to start a new one';
    } else {
      text = `${m.note ? `${m.note}. ` : ''}recording: ${m.events} event${m.events === 1 ? '' : 's'} since the start (reset or load starts over)`;
    }
    this.el.status.textContent = text;
    const s = this.el.status.dataset;
    s.events = String(m.events);
    s.replay = r ? r.name : '';
    s.mark = r && r.mark ? r.mark : '';
    s.next = r ? String(r.next) : '';
    s.note = m.note || '';
    this.el.stop.hidden = !r;
    const mark = r && r.mark ? r.mark : '';
    this.banner.hidden = !mark;
    this.banner.textContent = mark ? `${mark} · Play to go on` : '';
    this.lastMark = mark;
  }
}
