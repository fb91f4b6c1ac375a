import { forkHostProcess } from '../../app/engine/host/spawn.ts';
import { parseHostReply } from '../../app/engine/host/replies.ts';
import { idOf, parseHostRequest } from '../../app/engine/host/requests.ts';
import { ProtocolError } from '../../app/engine/host/protocol-error.ts';
import { toEngineError } from '../../app/engine/errors.ts';
import { EngineError } from '../../app/engine/types.ts';
import type { OpenSession } from './hosted-server.ts';
import { resolveLogPaths } from './log-folders.ts';

/**
 * One engine host process per socket (app/engine/host/child-main.ts, a locked engine), so one session's
 * load or crash cannot reach another's. The server relays between the socket and the process, checking
 * both ways: requests must parse (requests.ts), a registration may name bare file names only, which
 * are resolved inside the log folders here (log-folders.ts), and replies must parse (replies.ts).
 */
export function engineSession(logFolders: readonly string[]): OpenSession {
  return async (socket, closeSocket) => {
    const child = forkHostProcess();
    let stopping = false;
    child.onMessage((raw) => {
      try {
        socket.send(parseHostReply(raw));
      } catch (error) {
        console.error('Dropped a malformed engine host message:', error instanceof Error ? error.message : error);
      }
    });
    child.onClose?.((reason) => {
      if (!stopping) closeSocket(`The engine stopped (${reason}).`);
    });
    socket.onMessage((raw) => {
      try {
        const request = parseHostRequest(raw);
        child.send(request.kind === 'register' ? { ...request, source: resolveLogPaths(request.source, logFolders) } : request);
      } catch (error) {
        const e = error instanceof ProtocolError ? new EngineError('internal', error.message) : toEngineError(error);
        socket.send({ kind: 'error', id: idOf(raw), code: e.code, message: e.message });
      }
    });
    return {
      pid: child.pid,
      close: async () => {
        stopping = true;
        await child.stop();
      },
    };
  };
}
