/**
 * The demo data set: an invented fleet of edge cache servers and its 5-minute telemetry, generated deterministically
 * from a seed ({@link io.eigenmill.demo.FleetTelemetryGenerator}).
 *
 * <p>Layers: {@code NoiseSource}, {@code Fleet}, {@code TelemetryModel} and {@code ExtraMetrics} are plain Java
 * (tested without Spark); {@code TelemetryRows} is the executor-side adapter that writes Spark's binary rows;
 * {@code LongTelemetryRows} melts the same rows to one binary row per sample for the long layout;
 * {@code FleetTelemetryGenerator} builds the Dataset, writes Parquet and is the command line.
 *
 * <h2>Design notes</h2>
 *
 * <p><b>Why binary rows instead of {@code Row} and an encoder.</b> The first version mapped row ids to {@code Row}
 * objects through an external-row encoder. At 20,000 extra columns the generated serializer was still being built
 * and compiled after more than ten minutes on one task. Writing {@code UnsafeRow}s directly removes the encoder and
 * the boxing of every cell; for 108 columns both versions cost about the same.
 *
 * <p><b>Why no dictionary encoding for the metrics.</b> On 500,000 rows x 108 columns the Parquet write took about
 * 26 s of CPU with the default dictionary attempt and 13 s without it (a continuous metric never fits a dictionary,
 * and each column chunk tries before falling back). The key columns keep their dictionaries.
 *
 * <p><b>Why interpreted projections above {@value io.eigenmill.demo.FleetTelemetryGenerator#WIDE_COLUMNS} columns.
 * </b> Spark compiles a projection per plan node; at 20,000 columns that took about 30 s of CPU per task (the first
 * wave of tasks all compile it), and interpreting it costs microseconds per row. At 108 columns the two are within
 * measurement noise, so narrow writes keep Spark's default.
 *
 * <p><b>Measured speed</b> (local[2] on the 2-core development machine, shared with other work at a load average of
 * about 2.5; whole command including JVM and Spark start-up, {@code FleetTelemetryGenerator --master local[2]}):
 * <ul>
 *   <li>2,000,000 rows x 108 columns (62 base + 40 extra metrics + 6 keys), 8 partitions: write 32.4 s, 35.7 s wall
 *       in all, 66 s of CPU; 1.5 GB of Parquet over 8 days.</li>
 *   <li>500,000 rows x 108 columns: write 14.8 s.</li>
 *   <li>100,000 rows x 1,068 columns: write 30.4 s.</li>
 *   <li>5,000 rows x 20,068 columns, 2 partitions: write 58.7 s, of which about 10 s is Spark planning a
 *       20,000-column query on the driver; the rest is mostly Parquet's per-column work.</li>
 *   <li>Long layout, 30,000 rows x 62 metrics melted to about 1.8 million samples (the demo's long table; 25 MB of
 *       Parquet): write 23.6 s at a load average of 6, against 16.3 s for the same rows in the wide layout right
 *       after.</li>
 * </ul>
 * The model alone costs about 2 microseconds per row plus about 50 ns per extra column on one core.
 */
package io.eigenmill.demo;
