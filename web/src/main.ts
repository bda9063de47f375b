import 'uplot/dist/uPlot.min.css';
import './styles.css';
import { takeToken } from './accessToken.js';
import type { LinkState } from './liveSocket.js';
import type { ThemeName } from './palette.js';
import { showRunList } from './runList.js';
import { showRunView } from './runView.js';

/** Page entry: token, theme, link pill, and the two views (bench log ↔ watch desk) by `?run=`. */
const token = takeToken() ?? '';
const main = document.querySelector('main')!;
const pill = document.querySelector<HTMLElement>('#link')!;
const THEME_KEY = 'jostle.theme';
let theme: ThemeName = (localStorage.getItem(THEME_KEY) as ThemeName | null) ?? (matchMedia('(prefers-color-scheme: light)').matches ? 'daylight' : 'dusk');
const applyTheme = () => {
  document.documentElement.dataset.theme = theme;
  localStorage.setItem(THEME_KEY, theme);
};
applyTheme();

const LINK_TEXT: Record<LinkState, string> = { connecting: '◌ linking…', open: '● linked', waiting: '↻ link lost', closed: '○ closed' };
const onLink = (s: LinkState, retryInMs: number | null) => {
  pill.dataset.state = s;
  pill.textContent = s === 'waiting' && retryInMs !== null ? `${LINK_TEXT[s]} — retrying in ${(retryInMs / 1000).toFixed(1)} s` : LINK_TEXT[s];
};

let close: () => void = () => undefined;
const route = () => {
  close();
  const run = new URLSearchParams(location.search).get('run');
  if (!token) {
    main.innerHTML = '<p class="hint">This page needs the access token: open the address <code>jostle serve</code> printed (it ends in <code>?token=…</code>).</p>';
    return;
  }
  if (run) {
    close = showRunView(main, token, run, {
      theme: () => theme,
      toggleTheme: () => {
        theme = theme === 'dusk' ? 'daylight' : 'dusk';
        applyTheme();
      },
      goRuns: () => navigate(null),
      onLink,
    });
  } else {
    const link = showRunList(main, token, (id) => navigate(id), onLink);
    close = () => link.close();
  }
};
const navigate = (run: string | null) => {
  const url = new URL(location.href);
  if (run) url.searchParams.set('run', run);
  else url.searchParams.delete('run');
  history.pushState(null, '', url.toString());
  route();
};
window.addEventListener('popstate', route);
document.querySelector('#home')?.addEventListener('click', (e) => {
  e.preventDefault();
  navigate(null);
});
route();
