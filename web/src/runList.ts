import type { RunListEntry, ServerToDashboardMessage } from '../../server/protocol.js';
import { LEVEL_LOOK } from './alertStrip.js';
import { liveSocket, type LiveSocket, type LinkState } from './liveSocket.js';

/**
 * The "Bench log" page: every live and recorded run with its state, frames and worst alert
 * (icon and word), kept current by the `/watch` socket without a run; a click (or Enter) opens
 * one. Returns the socket so the caller can close it.
 *
 * @example
 * showRunList(document.querySelector('main')!, token, (id) => openRun(id), setLink);
 */
export function showRunList(host: HTMLElement, token: string, open: (id: string) => void, onLink: (s: LinkState, retryInMs: number | null) => void): LiveSocket {
  host.replaceChildren();
  const section = document.createElement('section');
  section.className = 'bench-log';
  section.innerHTML = '<h2>Bench log</h2><p class="hint">Live and recorded runs on this server. Pick one to watch it.</p>';
  const table = document.createElement('table');
  table.className = 'runs';
  table.innerHTML = '<thead><tr><th>run</th><th>label</th><th>state</th><th>started</th><th>frames</th><th>worst alert</th></tr></thead>';
  const body = document.createElement('tbody');
  table.append(body);
  section.append(table);
  host.append(section);
  const render = (runs: RunListEntry[]) => {
    body.replaceChildren();
    if (runs.length === 0) {
      const row = body.insertRow();
      const cell = row.insertCell();
      cell.colSpan = 6;
      cell.textContent = 'No runs yet: start a rig (jostle simulate … --url ws://…/rig) and it appears here.';
    }
    for (const r of [...runs].sort((a, b) => (a.state === b.state ? b.started.localeCompare(a.started) : a.state === 'live' ? -1 : 1))) {
      const row = body.insertRow();
      row.tabIndex = 0;
      row.dataset.run = r.id;
      row.className = `run-row state-${r.state}`;
      const worst = r.worst ?? 'none';
      const cells = [r.id, r.label, r.state === 'live' ? '◉ live' : '■ ended', new Date(r.started).toLocaleString(), String(r.frames), `${LEVEL_LOOK[worst].icon} ${r.worst ?? 'none'}`];
      for (const text of cells) row.insertCell().textContent = text;
      row.cells[5].className = `worst level-${worst}`;
      row.addEventListener('click', () => open(r.id));
      row.addEventListener('keydown', (e) => {
        if (e.key === 'Enter') open(r.id);
      });
    }
  };
  return liveSocket({
    url: `${location.protocol === 'https:' ? 'wss' : 'ws'}://${location.host}/watch?token=${encodeURIComponent(token)}`,
    onMessage: (m) => {
      const msg = m as ServerToDashboardMessage;
      if (msg.type === 'runs') render(msg.runs);
    },
    onState: (s, d) => onLink(s, d.retryInMs),
  });
}
