// What the run page and the pair page do alike with their controls: the
// message line, the state chip and transport buttons, numbers as typed,
// commit-on-Enter fields, large type and the keyboard.

// MessageLine is the page's line for refusals and notices (data-role
// "message"); data-cmd names the command a refusal answered.
export class MessageLine {
  constructor(el) { this.el = el; }

  show(text, kind, cmd) {
    this.el.hidden = false;
    this.el.textContent = text;
    this.el.className = `message ${kind}`;
    this.el.dataset.cmd = cmd || '';
  }

  hide() {
    this.el.hidden = true;
    this.el.textContent = '';
    this.el.dataset.cmd = '';
  }

  get error() { return !this.el.hidden && this.el.classList.contains('error'); }
}

// showState writes state s into the chip el.state and enables the
// buttons while s is one of live (and the page does not watch); el.play
// reads Pause while running.
export function showState(el, s, live, buttons) {
  el.state.textContent = s;
  el.state.dataset.state = s;
  el.play.textContent = s === 'running' ? 'Pause' : 'Play';
  for (const b of buttons) b.disabled = watching() || !live.includes(s);
}

// Controls that change only this page, which a watching page keeps.
const OWN_CONTROLS = ['large-type', 'help', 'projection-select', 'log-drift'];

// showRole applies a shared workbench's role message (server/roles.go):
// the body's data-role is the role; a page that watches shows the chip
// and its hint and disables every control that would send a command.
export function showRole(m) {
  const watch = m.role === 'watch';
  document.body.dataset.role = m.role;
  const chip = document.querySelector('[data-role="role-chip"]');
  const hint = document.querySelector('[data-role="role-hint"]');
  chip.hidden = !watch;
  hint.hidden = !watch;
  hint.textContent = watch ? m.hint : '';
  for (const c of document.querySelectorAll('.wb button, .wb select, .wb input')) {
    if (!OWN_CONTROLS.includes(c.dataset.role)) c.disabled = watch || c.disabled;
  }
}

// watching reports whether the page only watches (showRole).
export function watching() { return document.body.dataset.role === 'watch'; }

// numberOrText is what the user typed: a number when it reads as one,
// otherwise the text itself, so that the server's refusal can quote it.
export function numberOrText(s) {
  const t = s.trim();
  const x = Number(t);
  return t !== '' && Number.isFinite(x) ? x : t;
}

// commitOnEnter makes Enter in each text field commit it (its change event).
export function commitOnEnter(inputs) {
  for (const input of inputs) input.addEventListener('keydown', (e) => { if (e.key === 'Enter') input.blur(); });
}

export const LARGE_SCALE = 1.6;

// textScale is the factor by which canvases enlarge their type now.
export function textScale() { return isLarge() ? LARGE_SCALE : 1; }

export function isLarge() { return document.body.classList.contains('large'); }

// setLargeType switches large type (for projectors) on the page and its
// toggle button; it returns the canvases' type scale.
export function setLargeType(button, on) {
  document.body.classList.toggle('large', on);
  button.setAttribute('aria-pressed', String(on));
  return on ? LARGE_SCALE : 1;
}

// onKeys calls keys[k] for key k (letters in lower case) pressed on the
// page, outside text fields and menus and without Ctrl, Alt or Meta;
// escape, if given, is called for Escape wherever the focus is.
export function onKeys(keys, escape) {
  document.addEventListener('keydown', (e) => {
    if (e.ctrlKey || e.metaKey || e.altKey) return;
    if (e.key === 'Escape' && escape) { escape(); return; }
    const tag = e.target && e.target.tagName;
    if (tag === 'INPUT' || tag === 'SELECT' || tag === 'TEXTAREA') return;
    if (tag === 'BUTTON' && (e.key === ' ' || e.key === 'Enter')) return; // the button's own action
    const f = keys[e.key.length === 1 ? e.key.toLowerCase() : e.key];
    if (!f) return;
    e.preventDefault();
    f();
  });
}
