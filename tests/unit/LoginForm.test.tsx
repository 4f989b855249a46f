// @vitest-environment happy-dom
import { cleanup, fireEvent, render, screen, waitFor } from "@testing-library/react";
import { afterEach, describe, expect, it, vi } from "vitest";
import { LoginForm } from "../../src/components/auth/LoginForm";

afterEach(cleanup);

function fill(label: string, value: string) {
  fireEvent.input(screen.getByLabelText(label), { target: { value } });
}

describe("LoginForm", () => {
  it("has visible Email and Password labels (CONTRACT.md §7)", () => {
    render(<LoginForm onSubmit={vi.fn()} />);
    expect(screen.getByText("Email").tagName).toBe("LABEL");
    expect(screen.getByText("Password").tagName).toBe("LABEL");
    expect(screen.getByLabelText("Email").getAttribute("type")).toBe("email");
    expect(screen.getByLabelText("Password").getAttribute("type")).toBe("password");
  });

  it("sends the trimmed e-mail and the password", async () => {
    const onSubmit = vi.fn();
    render(<LoginForm onSubmit={onSubmit} />);
    fill("Email", "  engineer@fernmoor.example ");
    fill("Password", "blocklight-demo");
    fireEvent.click(screen.getByRole("button", { name: "Sign in" }));
    await waitFor(() => expect(onSubmit).toHaveBeenCalledTimes(1));
    expect(onSubmit).toHaveBeenCalledWith({ email: "engineer@fernmoor.example", password: "blocklight-demo" });
  });

  it.each([
    ["", "blocklight-demo", "Enter your e-mail address"],
    ["not-an-address", "blocklight-demo", "That does not look like an e-mail address"],
    ["viewer@fernmoor.example", "", "Enter your password"],
  ])("refuses email %j / password %j with %j", async (email, password, message) => {
    const onSubmit = vi.fn();
    render(<LoginForm onSubmit={onSubmit} />);
    fill("Email", email);
    fill("Password", password);
    fireEvent.click(screen.getByRole("button", { name: "Sign in" }));
    expect(await screen.findByText(message)).toBeTruthy();
    expect(onSubmit).not.toHaveBeenCalled();
  });

  it("shows the server's refusal", () => {
    render(<LoginForm onSubmit={vi.fn()} serverError="Wrong email or password." />);
    expect(screen.getByRole("alert").textContent).toBe("Wrong email or password.");
  });
});
