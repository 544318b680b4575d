/** Drop and re-create the database named in DATABASE_URL (tests only: refuses other names). */
import pg from "pg";

const url = new URL(process.env.DATABASE_URL ?? "");
const name = url.pathname.slice(1);
if (!/_test\d*$|_bench(_\w+)?$/.test(name)) {
  console.error(`Refusing to reset '${name}': only *_test and *_bench databases are reset.`);
  process.exit(2);
}
const admin = new URL(url);
admin.pathname = "/postgres";
const c = new pg.Client({ connectionString: admin.toString() });
await c.connect();
await c.query(`drop database if exists "${name}" with (force)`);
await c.query(`create database "${name}"`);
await c.end();
