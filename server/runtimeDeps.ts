/**
 * What the live pipeline gets from the app (server/runtime/ports.ts), built in one place so
 * the server, the tests and the benches wire it the same way.
 */
import type { AppDeps } from "./deps";
import { alarmPort } from "./features/alarms/service";
import type { RuntimeDeps } from "./runtime/ports";

export function runtimeDeps(deps: AppDeps): RuntimeDeps {
  return { logger: deps.logger, bus: deps.bus, alarms: alarmPort(deps) };
}
