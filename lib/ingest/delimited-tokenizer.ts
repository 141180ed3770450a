/**
 * Splits delimited text (CSV, semicolon CSV, TSV) into records, chunk by chunk, so a file of any
 * size passes through in bounded memory. Quoting follows RFC 4180: a cell may be wrapped in double
 * quotes, inside which the delimiter and line breaks are text and `""` is one quote. Line breaks
 * may be LF, CRLF or CR. A quote inside an unquoted cell is kept as text (as spreadsheets write it).
 *
 * References: Shafranovich Y (2005) Common Format and MIME Type for Comma-Separated Values (CSV)
 * Files, RFC 4180, IETF.
 */

export type Delimiter = "," | ";" | "\t";

/** Something wrong with the quoting of one record; `cellIndex` is 0-based. */
export interface QuotingIssue {
  kind: "text_after_closing_quote" | "unclosed_quote";
  line: number;
  cellIndex: number;
}

export type RecordHandler = (cells: string[], line: number, issues: QuotingIssue[] | null) => void;

const QUOTE = 34;
const LF = 10;
const CR = 13;

const enum State {
  CellStart,
  Unquoted,
  Quoted,
  /** Just read a quote inside a quoted cell: either an escaped quote or the cell's end. */
  QuoteInQuoted,
  /** After a closing quote, before the delimiter: anything here is stray text. */
  AfterClosingQuote,
}

export class DelimitedTokenizer {
  private readonly delimiterCode: number;
  private state: State = State.CellStart;
  private cells: string[] = [];
  private cell = "";
  private line = 1;
  private recordLine = 1;
  private pendingCr = false;
  private issues: QuotingIssue[] | null = null;
  private quoteOpenedOnLine = 1;
  /** Whether the current record has any content yet (a bare line break ends no record but a blank one). */
  private recordStarted = false;
  /** A quoted cell's text so far ended a chunk with CR: an LF starting the next chunk is the same line break. */
  private pendingCrInQuote = false;

  constructor(delimiter: Delimiter) {
    this.delimiterCode = delimiter.charCodeAt(0);
  }

  /** The line the tokenizer has reached (1-based). */
  get currentLine(): number {
    return this.line;
  }

  /** Feeds the next piece of text; calls `onRecord` for every record completed in it. */
  push(text: string, onRecord: RecordHandler): void {
    const delimiter = this.delimiterCode;
    const length = text.length;
    let index = 0;
    if (this.pendingCr) {
      this.pendingCr = false;
      if (length > 0 && text.charCodeAt(0) === LF) index = 1;
    }
    while (index < length) {
      const state = this.state;
      if (state === State.Quoted) {
        const close = text.indexOf('"', index);
        const end = close === -1 ? length : close;
        this.countLineBreaks(text, index, end, close === -1);
        this.cell += text.slice(index, end);
        if (close === -1) return;
        this.state = State.QuoteInQuoted;
        index = close + 1;
        continue;
      }
      const code = text.charCodeAt(index);
      if (state === State.QuoteInQuoted) {
        if (code === QUOTE) {
          this.cell += '"';
          this.state = State.Quoted;
          index += 1;
          continue;
        }
        this.state = State.AfterClosingQuote;
        // fall through to read `code` as what follows a closed cell
      }
      if (code === delimiter) {
        this.endCell();
        index += 1;
        continue;
      }
      if (code === LF || code === CR) {
        this.endRecord(onRecord);
        this.line += 1;
        if (code === CR) {
          if (index + 1 < length) {
            if (text.charCodeAt(index + 1) === LF) index += 1;
          } else {
            this.pendingCr = true;
          }
        }
        index += 1;
        this.recordLine = this.line;
        continue;
      }
      if (this.state === State.CellStart) {
        this.recordStarted = true;
        if (code === QUOTE) {
          this.state = State.Quoted;
          this.quoteOpenedOnLine = this.line;
          index += 1;
          continue;
        }
        this.state = State.Unquoted;
      }
      if (this.state === State.AfterClosingQuote) {
        this.addIssue("text_after_closing_quote");
        this.state = State.Unquoted;
      }
      // An unquoted run: everything up to the next delimiter or line break.
      let end = index;
      while (end < length) {
        const c = text.charCodeAt(end);
        if (c === delimiter || c === LF || c === CR) break;
        end += 1;
      }
      this.cell += text.slice(index, end);
      index = end;
    }
  }

  /** Ends the input: completes the last record, reporting a quote never closed. */
  end(onRecord: RecordHandler): void {
    this.pendingCr = false;
    if (this.state === State.Quoted) {
      this.issues ??= [];
      this.issues.push({ kind: "unclosed_quote", line: this.quoteOpenedOnLine, cellIndex: this.cells.length });
      this.state = State.AfterClosingQuote;
    }
    if (this.recordStarted || this.cells.length > 0 || this.cell.length > 0) this.endRecord(onRecord);
  }

  /** Counts the line breaks inside a quoted cell (CRLF once, even when a chunk ends between CR and LF). */
  private countLineBreaks(text: string, from: number, to: number, chunkEnds: boolean): void {
    for (let i = from; i < to; i++) {
      const c = text.charCodeAt(i);
      if (c === LF) {
        const afterCr = i > from ? text.charCodeAt(i - 1) === CR : this.pendingCrInQuote;
        if (!afterCr) this.line += 1;
      } else if (c === CR) {
        this.line += 1;
      }
    }
    this.pendingCrInQuote = chunkEnds && to > from && text.charCodeAt(to - 1) === CR;
  }

  private addIssue(kind: QuotingIssue["kind"]): void {
    this.issues ??= [];
    this.issues.push({ kind, line: this.line, cellIndex: this.cells.length });
  }

  private endCell(): void {
    this.cells.push(this.cell);
    this.cell = "";
    this.state = State.CellStart;
    this.recordStarted = true;
  }

  private endRecord(onRecord: RecordHandler): void {
    this.cells.push(this.cell);
    const cells = this.cells;
    const issues = this.issues;
    const line = this.recordLine;
    this.cells = [];
    this.cell = "";
    this.issues = null;
    this.state = State.CellStart;
    this.recordStarted = false;
    onRecord(cells, line, issues);
  }
}

/**
 * Guesses the delimiter from the start of a file: the candidate that splits the heading line into
 * the most cells and splits the next lines into the same number. Returns "," when no candidate
 * splits the headings (a one-column file reads the same either way).
 */
export function detectDelimiter(sample: string): Delimiter {
  const candidates: Delimiter[] = ["\t", ";", ","];
  let best: { delimiter: Delimiter; score: number } = { delimiter: ",", score: 0 };
  for (const delimiter of candidates) {
    const counts: number[] = [];
    const tokenizer = new DelimitedTokenizer(delimiter);
    const enough = {};
    try {
      tokenizer.push(sample, (cells) => {
        if (cells.length === 1 && cells[0]!.trim() === "") return;
        counts.push(cells.length);
        if (counts.length >= 20) throw enough;
      });
    } catch (stop) {
      if (stop !== enough) throw stop;
    }
    // The last sampled record may be cut off mid-way; judge it only if it is the only one.
    const complete = counts.length > 1 ? counts.slice(0, -1) : counts;
    const headingCells = complete[0] ?? 1;
    if (headingCells < 2) continue;
    const consistent = complete.filter((n) => n === headingCells).length / complete.length;
    const score = consistent * 1000 + headingCells;
    if (score > best.score) best = { delimiter, score };
  }
  return best.delimiter;
}

/** A record of a whole text split at once: its cells, the line it starts on, quoting problems. */
export interface TextRecord {
  cells: string[];
  line: number;
  issues: QuotingIssue[] | null;
}

/** Splits a whole text (already in memory) into records; see DelimitedTokenizer for the rules. */
export function splitDelimitedText(text: string, delimiter: Delimiter): TextRecord[] {
  const records: TextRecord[] = [];
  const tokenizer = new DelimitedTokenizer(delimiter);
  const onRecord: RecordHandler = (cells, line, issues) => records.push({ cells, line, issues });
  tokenizer.push(text, onRecord);
  tokenizer.end(onRecord);
  return records;
}
