/**
 * The Mailbox shows each link where it stands in the message (common practice, no source).
 */
import { describe, expect, it } from "vitest";
import { mailSegments } from "../../../hooks/use-mail";

describe("mailSegments", () => {
  it("keeps the link inside the text, in order", () => {
    const text =
      "Sign in to Covarion with this link:\nhttp://127.0.0.1:3000/api/auth/callback/email?token=abc&email=a%40b\n\nIt expires in 24 hours.";
    expect(mailSegments(text)).toEqual([
      { kind: "text", text: "Sign in to Covarion with this link:\n" },
      { kind: "link", href: "http://127.0.0.1:3000/api/auth/callback/email?token=abc&email=a%40b" },
      { kind: "text", text: "\n\nIt expires in 24 hours." },
    ]);
  });

  it("handles a message that starts or ends with a link, and one without links", () => {
    expect(mailSegments("https://x.example/a")).toEqual([
      { kind: "link", href: "https://x.example/a" },
    ]);
    expect(mailSegments("Open https://x.example/a. Then https://x.example/b")).toEqual([
      { kind: "text", text: "Open " },
      { kind: "link", href: "https://x.example/a" },
      { kind: "text", text: ". Then " },
      { kind: "link", href: "https://x.example/b" },
    ]);
    expect(mailSegments("No link here.")).toEqual([{ kind: "text", text: "No link here." }]);
  });
});
