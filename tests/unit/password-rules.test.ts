import { describe, expect, it } from "vitest";
import { passwordLengthProblem, signUpSchema } from "~/forms/account";
import { hashPassword } from "~/models/users.server";
import { passwordProblem } from "~/services/password-rules.server";

const ROBIN = { email: "robin.hive@example.test", name: "Robin Hive" };
const bytes = (text: string) => new TextEncoder().encode(text).length;

describe("new passwords", () => {
  it("refuses fewer than 10 characters, counting an emoji as one character", () => {
    for (const password of ["", "bees", "nine char", "🐝🐝🐝🐝🐝🐝🐝🐝🐝"]) {
      expect(passwordProblem(password, ROBIN), password).toBe("Use at least 10 characters.");
    }
  });

  it("refuses passwords from the common-password lists, with the digits people add to them", () => {
    // From the common-password list that zxcvbn ships (@zxcvbn-ts/language-common), and the
    // variants people make of them; common practice for "easily guessed".
    for (const password of ["password123", "qwertyuiop", "1234567890", "iloveyou12", "P@ssw0rd2024", "Password1234", "sunflower2020"]) {
      expect(passwordProblem(password, ROBIN), password).toMatch(/lists of common passwords/);
    }
  });

  it("refuses runs and repeats, and the person's own name or e-mail", () => {
    expect(passwordProblem("aaaaaaaaaaaa", ROBIN)).toMatch(/too easy to guess/);
    expect(passwordProblem("abcdefghijk", ROBIN)).toMatch(/too easy to guess/);
    for (const password of ["Robin Hive 2026", "RobinHive2026", "robin.hive@example.test", "varroute2026!"]) {
      expect(passwordProblem(password, ROBIN), password).toBe("Leave your name and e-mail address out of the password.");
    }
  });

  it("refuses more than 72 bytes in UTF-8, where bcrypt would ignore the rest, even under 72 characters", () => {
    const accented = "é".repeat(37); // 37 characters, 74 bytes
    const emoji = "🐝".repeat(19); // 19 characters, 76 bytes
    const mixed = "Grüße aus dem Bienenhaus, an alle Völker: zählt die Milben nach dem Öffnen"; // 74 characters, 79 bytes
    for (const password of [accented, emoji, mixed]) {
      expect(bytes(password)).toBeGreaterThan(72);
      expect([...password].length).toBeLessThan(80);
      expect(passwordProblem(password, ROBIN), password).toMatch(/^Keep the password to 72 bytes/);
      expect(passwordLengthProblem(password)).toMatch(/^Keep the password to 72 bytes/);
    }
  });

  it("takes good passwords, the demo password among them, up to exactly 72 bytes", () => {
    const exactly72 = "Grüße aus dem Bienenhaus, an alle Völker: zählt die Milben bald nah!"; // 68 characters, 72 bytes
    expect(bytes(exactly72)).toBe(72);
    expect([...exactly72].length).toBe(68);
    for (const password of ["demo-bees-2026", "correct horse battery", "a-long-enough-password", "Grüße aus dem Bienenhaus", exactly72]) {
      expect(passwordProblem(password, ROBIN), password).toBeNull();
    }
  });

  it("checks only the length in the browser's schema; the lists stay on the server", () => {
    const form = (password: string) => ({ name: "Robin Hive", email: "robin@example.test", phone: "", password, confirm: password });
    expect(signUpSchema.safeParse(form("password123")).success).toBe(true);
    const tooShort = signUpSchema.safeParse(form("short"));
    expect(tooShort.success).toBe(false);
    expect(tooShort.error?.issues[0]).toMatchObject({ path: ["password"], message: "Use at least 10 characters." });
    const tooLong = signUpSchema.safeParse(form("é".repeat(37)));
    expect(tooLong.error?.issues[0]).toMatchObject({ path: ["password"], message: expect.stringMatching(/^Keep the password to 72 bytes/) });
  });

  it("will not hash a password bcrypt would cut short", async () => {
    await expect(hashPassword("é".repeat(37))).rejects.toThrow(/longer than 72 bytes/);
    await expect(hashPassword("demo-bees-2026")).resolves.toMatch(/^\$2[aby]\$10\$/);
  });
});
