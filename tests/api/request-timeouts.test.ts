/**
 * A client that sends slowly cannot hold a connection: headers must arrive
 * within the idle limit, a body that pauses for the idle limit is cut off
 * with 408, and a whole request must arrive within the total limit. A slow
 * but steady sender, a slow answer and a server that reads late are not cut.
 *
 * Raw sockets against a listening server with short limits (0.4 s idle,
 * 3 s total) set through the configuration.
 */
import { once } from "node:events";
import type { RequestListener, Server } from "node:http";
import { type AddressInfo, connect, type Socket } from "node:net";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createHttpServer } from "../../server/http/request-timeouts";
import { createTestApp, type TestApp } from "./helpers";

let t: TestApp;
let server: Server;
let port: number;

async function listen(
  app: RequestListener,
  timeouts: { idleMs: number; totalMs: number },
): Promise<{ server: Server; port: number }> {
  const s = createHttpServer(app, timeouts);
  s.listen(0, "127.0.0.1");
  await once(s, "listening");
  return { server: s, port: (s.address() as AddressInfo).port };
}

async function stop(s: Server): Promise<void> {
  s.closeAllConnections();
  await new Promise<void>((resolve) => s.close(() => resolve()));
}

beforeAll(async () => {
  t = await createTestApp({
    seed: false,
    env: { REQUEST_IDLE_TIMEOUT_SECONDS: "0.4", REQUEST_TIMEOUT_SECONDS: "3" },
  });
  ({ server, port } = await listen(t.app, t.config.requestTimeouts));
});
afterAll(async () => {
  if (server) await stop(server);
  await t?.close();
});

interface Exchange {
  socket: Socket;
  /** Everything the server sent until it closed the connection, or null when it is still open after `withinMs`. */
  answer(withinMs: number): Promise<string | null>;
}

async function open(to: number): Promise<Exchange> {
  const socket = connect(to, "127.0.0.1");
  await once(socket, "connect");
  let received = "";
  socket.on("data", (chunk: Buffer) => {
    received += chunk.toString("latin1");
  });
  socket.on("error", () => {});
  const closed = once(socket, "close").then(() => received);
  return {
    socket,
    answer: (withinMs) =>
      Promise.race([
        closed,
        new Promise<null>((resolve) => setTimeout(() => resolve(null), withinMs)),
      ]),
  };
}

/** Writes `text` one character every `everyMs` until done or the socket closes. */
async function trickle(socket: Socket, text: string, everyMs: number): Promise<void> {
  for (const ch of text) {
    if (socket.destroyed || socket.writableEnded) return;
    socket.write(ch);
    await new Promise((r) => setTimeout(r, everyMs));
  }
}

const headers = (length: number) =>
  `POST /api/studies HTTP/1.1\r\nHost: 127.0.0.1:${port}\r\nContent-Type: application/json\r\nContent-Length: ${length}\r\nConnection: close\r\n\r\n`;

describe("request time limits", () => {
  it("cuts off a body that stops arriving with 408 and the error envelope", async () => {
    const x = await open(port);
    x.socket.write(`${headers(100)}{"name":`);
    const answer = await x.answer(5_000);
    x.socket.destroy();
    expect(answer).not.toBeNull();
    expect(answer).toMatch(/^HTTP\/1\.1 408 /);
    const body = JSON.parse(String(answer).slice(String(answer).indexOf("\r\n\r\n") + 4)) as {
      error: { code: string; message: string };
    };
    expect(body.error.code).toBe("request_timeout");
    expect(body.error.message).toContain("0.4 s");
  });

  it("cuts off a body that trickles in for longer than the total limit", async () => {
    const x = await open(port);
    x.socket.write(headers(1_000));
    void trickle(x.socket, `{"name":"${"a".repeat(990)}"}`, 100);
    const answer = await x.answer(10_000);
    x.socket.destroy();
    expect(answer).toMatch(/^HTTP\/1\.1 408 /);
  });

  it("cuts off headers that trickle in", async () => {
    const x = await open(port);
    x.socket.write(`GET /api/health HTTP/1.1\r\nHost: 127.0.0.1:${port}\r\n`);
    void trickle(x.socket, "X-Slow: ".concat("a".repeat(200)), 100);
    const answer = await x.answer(5_000);
    x.socket.destroy();
    expect(answer).toMatch(/^HTTP\/1\.1 408 /);
  });

  it("answers a slow but steady sender normally", async () => {
    const x = await open(port);
    const body = '{"name":"slow but steady"}';
    x.socket.write(headers(body.length));
    await trickle(x.socket, body, 60);
    const answer = await x.answer(5_000);
    x.socket.destroy();
    // Signed out: the body arrived whole and the route answered.
    expect(answer).toMatch(/^HTTP\/1\.1 401 /);
  });
});

describe("what the limits leave alone", () => {
  const limits = { idleMs: 300, totalMs: 3_000 };

  it("an answer that takes longer than the idle limit after the body arrived", async () => {
    const slow = await listen((req, res) => {
      req.resume();
      req.on("end", () => {
        res.writeHead(200, { "Content-Type": "text/plain" });
        res.write("first ");
        setTimeout(() => res.end("done"), 1_000);
      });
    }, limits);
    try {
      const x = await open(slow.port);
      x.socket.write(
        "POST /x HTTP/1.1\r\nHost: 127.0.0.1\r\nContent-Length: 5\r\nConnection: close\r\n\r\nhello",
      );
      const answer = await x.answer(5_000);
      x.socket.destroy();
      expect(answer).toMatch(/^HTTP\/1\.1 200 /);
      expect(answer).toMatch(/first [\s\S]*done/);
    } finally {
      await stop(slow.server);
    }
  });

  it("a body the server reads late (the pause is the server's, not the sender's)", async () => {
    const late = await listen((req, res) => {
      let bytes = 0;
      setTimeout(() => {
        req.on("data", (chunk: Buffer) => {
          bytes += chunk.length;
        });
        req.on("end", () => res.end(`read ${bytes}`));
      }, 1_000);
    }, limits);
    try {
      const x = await open(late.port);
      const size = 8 * 1024 * 1024;
      x.socket.write(
        `POST /x HTTP/1.1\r\nHost: 127.0.0.1\r\nContent-Length: ${size}\r\nConnection: close\r\n\r\n`,
      );
      x.socket.write(Buffer.alloc(size, 97));
      const answer = await x.answer(8_000);
      x.socket.destroy();
      expect(answer).toMatch(/^HTTP\/1\.1 200 /);
      expect(answer).toContain(`read ${size}`);
    } finally {
      await stop(late.server);
    }
  });
});
