package io.eigenmill.settings;

import java.time.LocalDateTime;
import java.time.OffsetDateTime;
import java.time.format.DateTimeFormatter;
import java.time.format.DateTimeParseException;
import java.util.regex.Pattern;

/**
 * The rules of a catalog table as input: {@code input.table} (a name Spark resolves through its configured catalogs,
 * e.g. {@code lake.telemetry.fleet}) instead of {@code input.path}, and {@code input.as-of}, the snapshot of a table
 * that keeps history to read: a snapshot id (digits only) or a time (ISO-8601, e.g. {@code 2026-11-30T08:00:00Z},
 * or {@code yyyy-MM-dd HH:mm:ss}, in the session's time zone).
 */
public final class InputTables {
  /** A multi-part table name: dot-separated parts, each a plain identifier or a back-quoted one. */
  private static final String PART = "(`[^`]+`|[A-Za-z_][A-Za-z0-9_]*)";
  private static final Pattern NAME = Pattern.compile(PART + "(\\." + PART + ")*");
  private static final Pattern DIGITS = Pattern.compile("[0-9]{1,19}");
  private static final DateTimeFormatter SPACED = DateTimeFormatter.ofPattern("uuuu-MM-dd HH:mm:ss")
      .withResolverStyle(java.time.format.ResolverStyle.STRICT);

  /** What {@code input.as-of} names. */
  public enum AsOfKind {
    NONE, SNAPSHOT_ID, TIMESTAMP
  }

  private InputTables() {}

  /**
   * The problem with the pair {@code input.path} / {@code input.table} (exactly one of them, unless a snapshot store
   * is read), or null.
   */
  public static String sourceProblem(String path, String table, String snapshots) {
    boolean hasPath = !path.isBlank();
    boolean hasTable = !table.isBlank();
    if (hasPath && hasTable) {
      return "input.path = " + path + " and input.table = " + table + " are both set: the input is either a folder"
          + " (input.path) or a catalog table (input.table); remove one";
    }
    if (!hasPath && !hasTable && snapshots.isBlank()) {
      return "input.path and input.table are both empty: set exactly one (input.path = a Parquet or CSV folder,"
          + " input.table = a catalog table such as catalog.db.table)";
    }
    if (hasTable && !snapshots.isBlank()) {
      return "input.snapshots = " + snapshots + " and input.table = " + table + " are both set: a fit reads either"
          + " a table or a snapshot store; remove one";
    }
    if (hasTable && !NAME.matcher(table.strip()).matches()) {
      return "input.table = " + table + ": not a table name; write catalog.db.table (dot-separated identifiers,"
          + " back-quote a part with other characters)";
    }
    return null;
  }

  /** The problem with {@code input.as-of}, or null. */
  public static String asOfProblem(String table, String asOf) {
    if (asOf.isBlank()) {
      return null;
    }
    if (table.isBlank()) {
      return "input.as-of = " + asOf + " without input.table: only a catalog table that keeps history has snapshots"
          + " to read";
    }
    if (kind(asOf) == AsOfKind.NONE) {
      return "input.as-of = " + asOf + ": not a snapshot id (digits only, e.g. 4923180334123) nor a time"
          + " (ISO-8601, e.g. 2026-11-30T08:00:00Z, or yyyy-MM-dd HH:mm:ss)";
    }
    return null;
  }

  /** What {@code asOf} names: a snapshot id, a time, or NONE when it is empty or of neither form. */
  public static AsOfKind kind(String asOf) {
    String v = asOf.strip();
    if (v.isEmpty()) {
      return AsOfKind.NONE;
    }
    if (DIGITS.matcher(v).matches()) {
      try {
        Long.parseLong(v);
        return AsOfKind.SNAPSHOT_ID;
      } catch (NumberFormatException e) {
        return AsOfKind.NONE;
      }
    }
    return timestamp(v) != null ? AsOfKind.TIMESTAMP : AsOfKind.NONE;
  }

  /**
   * The time of {@code asOf} as Spark SQL's {@code TIMESTAMP AS OF} takes it: an instant with an offset stays as
   * written (ISO-8601), a local time as {@code yyyy-MM-dd HH:mm:ss} (read in the session's time zone); null when it
   * is not a time.
   */
  public static String timestamp(String asOf) {
    String v = asOf.strip();
    try {
      return OffsetDateTime.parse(v).format(DateTimeFormatter.ISO_OFFSET_DATE_TIME);
    } catch (DateTimeParseException e) {
      // a local time
    }
    for (DateTimeFormatter f : new DateTimeFormatter[] {DateTimeFormatter.ISO_LOCAL_DATE_TIME, SPACED}) {
      try {
        return LocalDateTime.parse(v, f).format(SPACED);
      } catch (DateTimeParseException e) {
        // the next form
      }
    }
    return null;
  }
}
