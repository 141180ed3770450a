import Papa from "papaparse";
import type { FieldError } from "../errors/app-error";
import { restoreNeutralisedCell } from "./csv";
import type { PackageField, PackageResourceSchema } from "./package-schema";

export type PackageValue = string | number | boolean | Date | null;
export type PackageRow = Record<string, PackageValue>;

const INTEGER = /^[+-]?\d+$/;
const DATETIME = /^(\d{4})-(\d{2})-(\d{2})T(\d{2}):(\d{2}):(\d{2})(\.\d{1,3})?Z$/;
const TRUE_VALUES = new Set(["true", "True", "TRUE", "1"]);
const FALSE_VALUES = new Set(["false", "False", "FALSE", "0"]);

/** One cell read by its field's Table Schema type; a string is the reason when it cannot be read. */
function readCell(field: PackageField, cell: string): { value: PackageValue } | { problem: string } {
  if (cell === "") return field.required ? { problem: "a value is required" } : { value: null };
  switch (field.type) {
    case "integer": {
      const value = Number(cell);
      return INTEGER.test(cell) && Number.isSafeInteger(value) ? { value } : { problem: "expected a whole number" };
    }
    case "number": {
      const value = Number(cell);
      return cell.trim() === cell && Number.isFinite(value) ? { value } : { problem: "expected a finite number" };
    }
    case "boolean":
      if (TRUE_VALUES.has(cell)) return { value: true };
      if (FALSE_VALUES.has(cell)) return { value: false };
      return { problem: "expected true or false" };
    case "datetime": {
      const match = DATETIME.exec(cell);
      const value = new Date(cell);
      // Round-tripping through Date catches impossible dates such as 2023-02-30.
      if (!match || Number.isNaN(value.getTime()) || value.toISOString().slice(0, 19) !== cell.slice(0, 19)) {
        return { problem: "expected a UTC date-time such as 2024-03-01T09:30:00.000Z" };
      }
      return { value };
    }
    case "object": {
      const text = restoreNeutralisedCell(cell);
      try {
        const parsed: unknown = JSON.parse(text);
        if (parsed && typeof parsed === "object" && !Array.isArray(parsed)) return { value: text };
      } catch {
        // reported below
      }
      return { problem: "expected a JSON object" };
    }
    default: {
      const value = restoreNeutralisedCell(cell);
      if (field.enum && !field.enum.includes(value)) return { problem: `expected one of ${field.enum.join(", ")}` };
      return { value };
    }
  }
}

/**
 * Reads one resource's CSV by its Table Schema: the header must list the schema's fields in order;
 * each cell is read by its field's type (empty = missing), and formula-neutralised text is
 * restored. Returns the rows and every problem (file, 1-based data row, field, value, reason).
 */
export function readPackageTable(resource: PackageResourceSchema, path: string, csv: string): { rows: PackageRow[]; errors: FieldError[] } {
  const parsed = Papa.parse<string[]>(csv, { header: false, skipEmptyLines: false, delimiter: ",", quoteChar: "\"" });
  const errors: FieldError[] = parsed.errors.slice(0, 20).map((e) => ({ file: path, ...(e.row !== undefined ? { row: e.row } : {}), field: "(file)", message: `CSV: ${e.message}` }));
  const lines = parsed.data;
  // The file ends with a line break, which the parser reads as one empty last line.
  if (lines.length && lines[lines.length - 1]!.length === 1 && lines[lines.length - 1]![0] === "") lines.pop();
  const [header, ...body] = lines;
  const expected = resource.fields.map((f) => f.name);
  if (!header || header.join(",") !== expected.join(",")) {
    errors.push({ file: path, field: "(header)", message: `the header must be ${expected.join(",")}`, value: header?.join(",") ?? "" });
    return { rows: [], errors };
  }
  const rows: PackageRow[] = [];
  body.forEach((cells, index) => {
    const row = index + 1;
    if (cells.length !== expected.length) {
      errors.push({ file: path, row, field: "(row)", message: `expected ${expected.length} cells, found ${cells.length}` });
      return;
    }
    const record: PackageRow = {};
    let ok = true;
    resource.fields.forEach((field, column) => {
      const cell = cells[column]!;
      const read = readCell(field, cell);
      if ("problem" in read) {
        ok = false;
        errors.push({ file: path, row, field: field.name, message: read.problem, value: cell });
      } else record[field.name] = read.value;
    });
    if (ok) rows.push(record);
  });
  return { rows, errors };
}
