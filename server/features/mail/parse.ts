/**
 * Just enough RFC 5322/MIME reading for the fake SMTP server to show what nodemailer sent:
 * the Subject (with encoded words) and a text/plain body in 7bit, quoted-printable or base64.
 */
export interface ParsedMail {
  subject: string;
  text: string;
}

function decodeWords(value: string): string {
  return value.replace(/=\?([^?]+)\?([BbQq])\?([^?]*)\?=/g, (_m, _charset: string, enc: string, data: string) =>
    enc.toUpperCase() === "B" ? Buffer.from(data, "base64").toString("utf8") : decodeQuotedPrintable(data.replace(/_/g, " ")),
  );
}

export function decodeQuotedPrintable(text: string): string {
  const soft = text.replace(/=\r?\n/g, "");
  const bytes: number[] = [];
  for (let i = 0; i < soft.length; i++) {
    if (soft[i] === "=" && /^[0-9A-Fa-f]{2}$/.test(soft.slice(i + 1, i + 3))) {
      bytes.push(parseInt(soft.slice(i + 1, i + 3), 16));
      i += 2;
    } else {
      bytes.push(...Buffer.from(soft[i], "utf8"));
    }
  }
  return Buffer.from(bytes).toString("utf8");
}

function splitHeaders(raw: string): { headers: Record<string, string>; body: string } {
  const at = raw.search(/\r?\n\r?\n/);
  const head = at === -1 ? raw : raw.slice(0, at);
  const body = at === -1 ? "" : raw.slice(at).replace(/^\r?\n\r?\n/, "");
  const headers: Record<string, string> = {};
  for (const line of head.replace(/\r?\n[ \t]+/g, " ").split(/\r?\n/)) {
    const colon = line.indexOf(":");
    if (colon > 0) headers[line.slice(0, colon).trim().toLowerCase()] = line.slice(colon + 1).trim();
  }
  return { headers, body };
}

function decodeBody(headers: Record<string, string>, body: string): string {
  const encoding = (headers["content-transfer-encoding"] ?? "7bit").toLowerCase();
  if (encoding === "base64") return Buffer.from(body.replace(/\s+/g, ""), "base64").toString("utf8");
  if (encoding === "quoted-printable") return decodeQuotedPrintable(body);
  return body;
}

export function parseMessage(raw: string): ParsedMail {
  const { headers, body } = splitHeaders(raw);
  const subject = decodeWords(headers.subject ?? "(no subject)");
  const type = headers["content-type"] ?? "text/plain";
  const boundary = /boundary="?([^";]+)"?/i.exec(type)?.[1];
  if (type.toLowerCase().startsWith("multipart/") && boundary) {
    for (const part of body.split(`--${boundary}`)) {
      const p = splitHeaders(part.replace(/^\r?\n/, ""));
      if ((p.headers["content-type"] ?? "").toLowerCase().startsWith("text/plain")) return { subject, text: decodeBody(p.headers, p.body).trim() };
    }
  }
  return { subject, text: decodeBody(headers, body).replace(/\r\n/g, "\n").trim() };
}
