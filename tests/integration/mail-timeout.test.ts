/**
 * A mail server that accepts the connection and then says nothing must not hang the
 * page or job that sends: the SMTP greeting timeout (10 s) gives up with an error.
 * Regression: the timeouts were once passed where nodemailer reads message defaults,
 * so they never applied and a send waited for the library's 2-minute default instead.
 */
import net from "node:net";
import { afterAll, beforeAll, expect, it } from "vitest";
import { closeMailer, sendMail } from "@/server/mail/mailer";

let silent: net.Server;
const sockets = new Set<net.Socket>();

beforeAll(async () => {
  silent = net.createServer((socket) => {
    sockets.add(socket); // accept, never greet
    socket.on("close", () => sockets.delete(socket));
  });
  await new Promise<void>((resolve) => silent.listen(0, "127.0.0.1", resolve));
  const { port } = silent.address() as net.AddressInfo;
  process.env.SMTP_URL = `smtp://127.0.0.1:${port}`;
});

afterAll(async () => {
  closeMailer();
  for (const s of sockets) s.destroy();
  await new Promise<void>((resolve) => silent.close(() => resolve()));
});

it("gives up on a silent SMTP server after the greeting timeout", async () => {
  const t0 = performance.now();
  await expect(sendMail({ to: "someone@test.example", subject: "hello", text: "body" })).rejects.toThrow(
    /greeting|timeout/i,
  );
  const seconds = (performance.now() - t0) / 1000;
  // Source: nodemailer SMTP connection options (greetingTimeout); we set 10 s, the library default is 30 s.
  expect(seconds).toBeGreaterThan(9);
  expect(seconds).toBeLessThan(20);
});
