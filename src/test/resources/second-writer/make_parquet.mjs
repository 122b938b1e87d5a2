// Writes the corpus's Parquet files with DuckDB (npm @duckdb/node-api), a Parquet writer other than Spark's:
// row groups of 2048 rows, its default encodings (dictionary pages where a row group has few distinct values),
// zstd pages. Run after make_tables.py, from this folder; the CSV files can be deleted afterwards.
import { DuckDBInstance } from '@duckdb/node-api';

const db = await DuckDBInstance.create(':memory:');
const c = await db.connect();
await c.run(`COPY (SELECT * FROM read_csv('doubles.csv', header = true, columns = {
    'seq': 'BIGINT', 'host': 'VARCHAR', 'req_rate': 'DOUBLE', 'egress_gbps': 'DOUBLE', 'hit_ratio': 'DOUBLE', 'disk_util': 'DOUBLE',
    'cpu_pct': 'DOUBLE', 'tcp_retrans': 'DOUBLE'}))
  TO 'doubles.parquet' (FORMAT parquet, ROW_GROUP_SIZE 2048, COMPRESSION zstd)`);
await c.run(`COPY (SELECT * FROM read_csv('mixed.csv', header = true, columns = {
    'seq': 'BIGINT', 'hit_ratio': 'FLOAT', 'disk_util': 'INTEGER', 'req_rate': 'BIGINT', 'egress_gbps': 'DECIMAL(12,3)',
    'cpu_pct': 'DOUBLE'}))
  TO 'mixed.parquet' (FORMAT parquet, ROW_GROUP_SIZE 2048, COMPRESSION zstd)`);
const meta = await c.runAndReadAll(`SELECT file_name, row_group_id, path_in_schema, encodings, num_values
  FROM parquet_metadata('doubles.parquet') WHERE path_in_schema = 'disk_util' ORDER BY row_group_id`);
console.log(meta.getRowObjects());
