// Compares prisma/schema.prisma with a live database: same tables, columns, types and
// nullability. A small parser of our own keeps the rule visible (and needs no Prisma engine).
import type pg from "pg";

export interface ExpectedColumn {
  table: string;
  column: string;
  /** PostgreSQL's format_type() spelling, e.g. "timestamp(6) with time zone", "text[]". */
  type: string;
  nullable: boolean;
}

const scalarTypes: Record<string, string> = {
  String: "text",
  Int: "integer",
  BigInt: "bigint",
  Float: "double precision",
  Boolean: "boolean",
  DateTime: "timestamp(3) without time zone",
  Json: "jsonb",
  Decimal: "numeric(65,30)",
  Bytes: "bytea",
};

function nativeType(attribute: string): string | undefined {
  const match = /@db\.(\w+)(?:\(([^)]*)\))?/.exec(attribute);
  if (!match) return undefined;
  const [, name, args] = match;
  switch (name) {
    case "Uuid":
      return "uuid";
    case "Char":
      return `character(${args})`;
    case "VarChar":
      return `character varying(${args})`;
    case "SmallInt":
      return "smallint";
    case "Timestamptz":
      return `timestamp(${args ?? 6}) with time zone`;
    case "Timestamp":
      return `timestamp(${args ?? 6}) without time zone`;
    case "Text":
      return "text";
    case "Date":
      return "date";
    default:
      throw new Error(`schema-agreement: native type @db.${name} is not mapped yet; add it here`);
  }
}

export function expectedColumnsFromPrismaSchema(schema: string): ExpectedColumn[] {
  const columns: ExpectedColumn[] = [];
  const modelBlocks = [...schema.matchAll(/^model\s+(\w+)\s*\{([\s\S]*?)^\}/gm)];
  const modelNames = new Set(modelBlocks.map((block) => block[1]));
  for (const [, modelName, body] of modelBlocks) {
    const table = /@@map\("([^"]+)"\)/.exec(body)?.[1] ?? modelName;
    for (const rawLine of body.split("\n")) {
      const line = rawLine.replace(/\/\/.*$/, "").trim();
      if (!line || line.startsWith("@@")) continue;
      const match = /^(\w+)\s+(\w+)(\[\])?(\?)?\s*(.*)$/.exec(line);
      if (!match) continue;
      const [, field, baseType, list, optional, attributes] = match;
      if (modelNames.has(baseType)) continue; // relation field, no column
      const column = /@map\("([^"]+)"\)/.exec(attributes)?.[1] ?? field;
      const scalar = nativeType(attributes) ?? scalarTypes[baseType];
      if (!scalar) throw new Error(`schema-agreement: unknown Prisma type ${baseType} on ${modelName}.${field}`);
      columns.push({ table, column, type: list ? `${scalar}[]` : scalar, nullable: Boolean(optional) });
    }
  }
  return columns;
}

export async function actualColumns(client: pg.Client | pg.Pool): Promise<ExpectedColumn[]> {
  const { rows } = await client.query<{ table: string; column: string; type: string; nullable: boolean }>(`
    SELECT c.relname AS table, a.attname AS column,
           format_type(a.atttypid, a.atttypmod) AS type, NOT a.attnotnull AS nullable
      FROM pg_attribute a
      JOIN pg_class c ON c.oid = a.attrelid
      JOIN pg_namespace n ON n.oid = c.relnamespace
     WHERE n.nspname = 'public' AND c.relkind IN ('r', 'p') AND a.attnum > 0 AND NOT a.attisdropped
       AND c.relname <> '_prisma_migrations'`);
  return rows;
}

// PostgreSQL's default timestamp precision is 6, spelled without a modifier by format_type().
function normalizeType(type: string): string {
  return type.replace(/^timestamp\(6\)/, "timestamp");
}

/** Human-readable differences; empty when schema and database agree. */
export function compareColumns(expectedRaw: ExpectedColumn[], actualRaw: ExpectedColumn[]): string[] {
  const expected = expectedRaw.map((column) => ({ ...column, type: normalizeType(column.type) }));
  const actual = actualRaw.map((column) => ({ ...column, type: normalizeType(column.type) }));
  const key = (column: ExpectedColumn) => `${column.table}.${column.column}`;
  const actualByKey = new Map(actual.map((column) => [key(column), column]));
  const expectedByKey = new Map(expected.map((column) => [key(column), column]));
  const differences: string[] = [];
  for (const column of expected) {
    const found = actualByKey.get(key(column));
    if (!found) {
      differences.push(`${key(column)}: in schema.prisma, missing in the database`);
      continue;
    }
    if (found.type !== column.type) differences.push(`${key(column)}: type ${column.type} in schema.prisma, ${found.type} in the database`);
    if (found.nullable !== column.nullable) {
      differences.push(`${key(column)}: ${column.nullable ? "optional" : "required"} in schema.prisma, ${found.nullable ? "nullable" : "NOT NULL"} in the database`);
    }
  }
  for (const column of actual) {
    if (!expectedByKey.has(key(column))) differences.push(`${key(column)}: in the database, missing in schema.prisma`);
  }
  return differences.sort();
}
