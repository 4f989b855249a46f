/**
 * The event log of the live pipeline: every SQL statement that writes it (group commit) or
 * reads it back (recovery, replay inputs) lives in this folder.
 */
export * from "./commit";
export * from "./read";
export * from "./throws";
