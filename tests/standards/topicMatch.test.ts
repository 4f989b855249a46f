/**
 * Topic-filter matching against the examples of OASIS MQTT Version 3.1.1 (29 October 2014),
 * §4.7.1.2 (multi-level wildcard), §4.7.1.3 (single-level wildcard) and §4.7.2 (topics
 * beginning with "$"), as listed in docs REFERENCES.md.
 */
import { describe, expect, it } from "vitest";
import { filterWithin, isValidFilter, topicMatches } from "@shared/contract/topicMatch";

describe("topic filters — OASIS MQTT 3.1.1 §4.7", () => {
  it.each([
    // §4.7.1.2 multi-level wildcard
    ["sport/tennis/player1/#", "sport/tennis/player1", true],
    ["sport/tennis/player1/#", "sport/tennis/player1/ranking", true],
    ["sport/tennis/player1/#", "sport/tennis/player1/score/wimbledon", true],
    ["sport/#", "sport", true],
    // §4.7.1.3 single-level wildcard
    ["sport/tennis/+", "sport/tennis/player1", true],
    ["sport/tennis/+", "sport/tennis/player2", true],
    ["sport/tennis/+", "sport/tennis/player1/ranking", false],
    ["sport/+", "sport", false],
    ["sport/+", "sport/", true],
    ["+/+", "/finance", true],
    ["/+", "/finance", true],
    ["+", "/finance", false],
    // §4.7.2 topics beginning with $
    ["#", "$SYS/broker/clients", false],
    ["+/monitor/Clients", "$SYS/monitor/Clients", false],
    ["$SYS/#", "$SYS/monitor/Clients", true],
    ["$SYS/monitor/+", "$SYS/monitor/Clients", true],
  ])("%s matches %s: %s", (filter, topic, expected) => {
    expect(topicMatches(filter, topic)).toBe(expected);
  });

  it.each([
    // §4.7.1.2 and §4.7.1.3 valid and invalid filters
    ["#", true],
    ["sport/tennis/#", true],
    ["sport/tennis#", false],
    ["sport/tennis/#/ranking", false],
    ["+", true],
    ["+/tennis/#", true],
    ["sport/+/player1", true],
    ["sport+", false],
  ])("filter %s is valid: %s", (filter, expected) => {
    expect(isValidFilter(filter)).toBe(expected);
  });
});

describe("subscription within an allowed filter (the broker's ACL for boards)", () => {
  const allowed = "blocklight/v1/kestrel-bank/signal/#";
  it.each([
    ["blocklight/v1/kestrel-bank/signal/#", true],
    ["blocklight/v1/kestrel-bank/signal/+/aspect", true],
    ["blocklight/v1/kestrel-bank/signal/M1/aspect", true],
    ["blocklight/v1/kestrel-bank/#", false],
    ["blocklight/v1/+/signal/#", false],
    ["blocklight/v1/wrenfold-loop/signal/#", false],
    ["#", false],
    ["blocklight/v1/kestrel-bank/node/junction/pulse", false],
  ])("%s: %s", (filter, expected) => {
    expect(filterWithin(filter, allowed)).toBe(expected);
  });
});
