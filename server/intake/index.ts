/**
 * The data intake library: one implementation of reading, checking, typing
 * and joining uploaded tables, used by the app's upload routes and by the
 * recipe command. Pure: no I/O, no framework imports.
 */
export * from "./errors";
export * from "./cells";
export * from "./read-table";
export * from "./columns";
export * from "./identifiers";
export * from "./brain-table";
export * from "./participant-sheet";
export * from "./roster";
export * from "./fit-data";
export * from "./preview";
export * from "./export-csv";
export * from "./hash";
export * from "./file-name";
