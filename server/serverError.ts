/**
 * An error that crosses the server's boundary (to a client or to the command line), with a
 * stable code `JOSTLE_E_…` and a fixed phrase as message.
 *
 * @example
 * new ServerError('JOSTLE_E_FRAME_ORDER', 'frame index not increasing').code // → 'JOSTLE_E_FRAME_ORDER'
 */
export class ServerError extends Error {
  readonly code: string;
  constructor(code: string, message: string) {
    super(message);
    this.code = code;
  }
}
