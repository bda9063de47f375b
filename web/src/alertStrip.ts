import type { Alert } from '../../src/report.js';
import { fmt } from './formatNumber.js';

/** How each level shows: an icon shape and a word, so nothing rests on colour alone. */
export const LEVEL_LOOK = {
  none: { icon: '●', word: 'Steady' },
  info: { icon: 'ⓘ', word: 'Note' },
  warn: { icon: '▲', word: 'Caution' },
  stop: { icon: '⬣', word: 'HALT' },
} as const;

const RANK = { info: 1, warn: 2, stop: 3 } as const;

/** The worst level among open alerts (`end === null`), or 'none'. O(alerts). */
export function worstOpenLevel(alerts: readonly Alert[]): keyof typeof LEVEL_LOOK {
  let worst: keyof typeof LEVEL_LOOK = 'none';
  for (const a of alerts) if (a.end === null && (worst === 'none' || RANK[a.level] > RANK[worst])) worst = a.level;
  return worst;
}

/** Splits an alert message into what was seen and the likely cause with its remedy. */
export function splitRemedy(message: string): { finding: string; remedy: string } {
  const m = /[.;]\s+(?=(?:Likely|likely|Check|check|Try|try)\b)/.exec(message);
  return m ? { finding: message.slice(0, m.index), remedy: message.slice(m.index + m[0].length) } : { finding: message, remedy: '' };
}

function numbersLine(a: Alert): string {
  const d = a.detail as { statistic?: { name: string; value: number; threshold: number }; effect?: { name: string; value: number; ci95: [number, number] | null; unit: string } | null; falseAlarm?: { arl0Frames?: number; pValue?: number; perHour?: number } };
  const parts: string[] = [];
  if (d.statistic) parts.push(`${d.statistic.name}: ${fmt(d.statistic.value)} (threshold ${fmt(d.statistic.threshold)})`);
  if (d.effect) {
    const unit = d.effect.unit && d.effect.unit !== '1' ? ` ${d.effect.unit}` : '';
    const ci = d.effect.ci95 ? ` [95 % CI ${fmt(d.effect.ci95[0])}–${fmt(d.effect.ci95[1])}]` : '';
    parts.push(`${d.effect.name}: ${fmt(d.effect.value)}${unit}${ci}`);
  }
  if (d.falseAlarm?.perHour !== undefined) parts.push(`false alarms ≈ ${fmt(d.falseAlarm.perHour)} per hour`);
  else if (d.falseAlarm?.pValue !== undefined) parts.push(`p = ${fmt(d.falseAlarm.pValue)}`);
  return parts.join(' · ');
}

const el = <K extends keyof HTMLElementTagNameMap>(tag: K, cls: string, text?: string): HTMLElementTagNameMap[K] => {
  const e = document.createElement(tag);
  e.className = cls;
  if (text !== undefined) e.textContent = text;
  return e;
};

/**
 * Renders the alert strip into `host`: a banner whose level shows by colour, hatch pattern,
 * icon shape and word (warn: "Caution" ▲; stop: "HALT" ⬣, full width and tall), then one card
 * per open alert with its message, numbers (statistic against threshold, effect with CI,
 * false-alarm rate), likely cause and remedy, and an "I've seen it" button that calls `onAck`.
 * Re-renders only when the alerts changed. O(alerts).
 *
 * @example
 * renderAlertStrip(document.querySelector('#strip')!, report.alerts, (id) => link.send({ type: 'ack', alert: id }));
 */
export function renderAlertStrip(host: HTMLElement, alerts: readonly Alert[], onAck: (id: string) => void, acked: ReadonlySet<string>): void {
  const open = alerts.filter((a) => a.end === null).sort((a, b) => RANK[b.level] - RANK[a.level] || b.start - a.start);
  const closed = alerts.filter((a) => a.end !== null).slice(-3).reverse();
  const signature = JSON.stringify([open.map((a) => [a.id, a.level, a.message, a.detail?.acknowledged === true || acked.has(a.id)]), closed.map((a) => a.id)]);
  if (host.dataset.signature === signature) return;
  host.dataset.signature = signature;
  const worst = worstOpenLevel(alerts);
  host.dataset.level = worst;
  host.replaceChildren();
  const banner = el('div', `banner banner-${worst}`);
  banner.setAttribute('role', worst === 'stop' || worst === 'warn' ? 'alert' : 'status');
  banner.append(el('span', 'banner-icon', LEVEL_LOOK[worst].icon), el('span', 'banner-word', LEVEL_LOOK[worst].word));
  const summary = worst === 'none' ? 'no open alerts' : `${open.length} open alert${open.length === 1 ? '' : 's'}: ${open.map((a) => a.kind).join(', ')}`;
  banner.append(el('span', 'banner-text', summary));
  host.append(banner);
  for (const a of open) {
    const seen = a.detail?.acknowledged === true || acked.has(a.id);
    const card = el('article', `alert-card level-${a.level}${seen ? ' seen' : ''}`);
    card.dataset.alert = a.id;
    const head = el('header', 'alert-head');
    head.append(el('span', 'alert-icon', LEVEL_LOOK[a.level].icon), el('strong', 'alert-level', LEVEL_LOOK[a.level].word), el('span', 'alert-kind', `${a.kind} · since t = ${fmt(a.start)} s`));
    const { finding, remedy } = splitRemedy(a.message);
    card.append(head, el('p', 'alert-finding', finding));
    const numbers = numbersLine(a);
    if (numbers) card.append(el('p', 'alert-numbers', numbers));
    if (remedy) card.append(el('p', 'alert-remedy', `What to do: ${remedy}`));
    const button = el('button', 'ack', seen ? '✓ seen' : "I've seen it (k)");
    button.disabled = seen;
    button.addEventListener('click', () => onAck(a.id));
    card.append(button);
    host.append(card);
  }
  if (closed.length > 0) {
    const past = el('p', 'alert-past', `Cleared: ${closed.map((a) => `${a.kind} (${fmt(a.start)}–${fmt(a.end as number)} s)`).join(', ')}`);
    host.append(past);
  }
}
