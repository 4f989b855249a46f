/**
 * The bad-login storm of broker.bench.ts, in a process of its own so that the attackers'
 * work does not delay the good board's timing in the bench process.
 *
 * argv: URL NODE CLIENT_ID CLIENTS RETRY_MS. Prints the number of attempts made every second
 * (one line each) until it is killed.
 */
import mqtt from "mqtt";

const [url, node, clientId, clients, retryMs] = process.argv.slice(2);
let attempts = 0;

function badLogin(i: number): Promise<void> {
  return new Promise((resolve) => {
    const client = mqtt.connect(url, { protocolVersion: 4, username: node, password: `wrong-password-${i}`, clientId, reconnectPeriod: 0, connectTimeout: 10_000 });
    const done = () => {
      client.end(true);
      resolve();
    };
    client.once("error", done);
    client.once("close", done);
    client.once("connect", done);
  });
}

for (let i = 0; i < Number(clients); i++) {
  void (async () => {
    for (;;) {
      await badLogin(i);
      attempts++;
      await new Promise((resolve) => setTimeout(resolve, Number(retryMs)));
    }
  })();
}
setInterval(() => process.stdout.write(`${attempts}\n`), 1000);
