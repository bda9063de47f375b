/** The sessionStorage key under which the page keeps its access token. */
export const TOKEN_KEY = 'jostle.token';

/**
 * Splits the access token off a page address: returns the token (or null) and the address
 * without `?token=` (the rest of the query and the hash kept), for `history.replaceState`.
 *
 * Complexity O(length of the address).
 *
 * @example
 * splitToken('http://127.0.0.1:7311/?token=abc&run=r1')
 * // → { token: 'abc', cleanUrl: 'http://127.0.0.1:7311/?run=r1' }
 */
export function splitToken(href: string): { token: string | null; cleanUrl: string } {
  const url = new URL(href);
  const token = url.searchParams.get('token');
  url.searchParams.delete('token');
  return { token: token === '' ? null : token, cleanUrl: url.toString() };
}

/**
 * The page's token: taken from the address it was opened with (then kept in sessionStorage and
 * stripped from the visible address), else the one kept earlier in this tab. Browser only.
 *
 * @example
 * const token = takeToken(); // 'abc' after opening /?token=abc; the address bar shows /
 */
export function takeToken(): string | null {
  const { token, cleanUrl } = splitToken(location.href);
  if (token !== null) {
    sessionStorage.setItem(TOKEN_KEY, token);
    history.replaceState(history.state, '', cleanUrl);
    return token;
  }
  return sessionStorage.getItem(TOKEN_KEY);
}
