import nodemailer from 'nodemailer';

export interface MailMessage {
  to: string;
  subject: string;
  text: string;
}

export interface Mailer {
  send(message: MailMessage): Promise<void>;
}

/**
 * Mail through nodemailer: to `smtpUrl` when configured (any SMTP service), otherwise to the
 * local sink on 127.0.0.1:`sinkPort`.
 */
export function createMailer(options: {
  smtpUrl?: string;
  sinkPort: number;
  from: string;
}): Mailer {
  const transport = options.smtpUrl
    ? nodemailer.createTransport(options.smtpUrl)
    : nodemailer.createTransport({
        host: '127.0.0.1',
        port: options.sinkPort,
        secure: false,
        // The sink speaks plain SMTP on loopback only.
        ignoreTLS: true,
      });
  return {
    async send(message) {
      await transport.sendMail({ from: options.from, ...message });
    },
  };
}
