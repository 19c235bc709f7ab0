import nodemailer, { type Transporter } from "nodemailer";
import { getConfig, type MailConfig } from "../config/index.ts";
import type { StoredMail } from "../db/notifications.ts";

/** Nodemailer's SMTP transport for the configured server (SMTP_HOST, SMTP_PORT, optional SMTP_USER/SMTP_PASSWORD). */
export function createMailTransport(config: MailConfig = getConfig().mail): Transporter {
  const { host, port, user, password } = config.smtp;
  return nodemailer.createTransport({
    host,
    port,
    // Implicit TLS on 465 only; elsewhere STARTTLS when the server offers it (the local sink does not).
    secure: port === 465,
    ...(user ? { auth: { user, pass: password ?? "" } } : {}),
    connectionTimeout: 5000,
    greetingTimeout: 5000,
    socketTimeout: 15_000,
  });
}

/** Send one stored notification. @returns the Message-ID the transport gave it */
export async function sendStoredMail(transport: Transporter, mail: StoredMail, config: MailConfig = getConfig().mail): Promise<string | null> {
  const info = await transport.sendMail({
    from: config.from,
    to: mail.recipient,
    subject: mail.subject,
    text: mail.body,
    headers: { "X-Stillpoint-Kind": mail.kind, "X-Stillpoint-Notification": String(mail.id) },
  });
  return typeof info.messageId === "string" ? info.messageId : null;
}
