package io.eigenmill.settings;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import org.junit.jupiter.api.Test;

/** The rules of {@code input.table} and {@code input.as-of}, as the settings reader applies them. */
class InputTablesTest {
  private static final String OUT = "output.path = \"/data/out\"\n";

  private static JobSettings read(String hocon) {
    return new SettingsReader().readString(hocon + OUT, List.of(), "job.conf");
  }

  private static List<String> problems(String hocon) {
    return assertThrows(InvalidJobException.class, () -> read(hocon)).problems();
  }

  @Test
  void asOfForms() {
    // snapshot ids are 64-bit integers (Iceberg table spec, "snapshot-id": long); times as ISO-8601 (java.time)
    assertEquals(InputTables.AsOfKind.SNAPSHOT_ID, InputTables.kind("4923180334123"));
    assertEquals(InputTables.AsOfKind.NONE, InputTables.kind("99999999999999999999"), "beyond a long");
    assertEquals(InputTables.AsOfKind.TIMESTAMP, InputTables.kind("2026-11-30T08:00:00Z"));
    assertEquals(InputTables.AsOfKind.TIMESTAMP, InputTables.kind("2026-11-30T08:00:00.125+01:00"));
    assertEquals(InputTables.AsOfKind.TIMESTAMP, InputTables.kind("2026-11-30 08:00:00"));
    assertEquals(InputTables.AsOfKind.NONE, InputTables.kind("2026-11-31 08:00:00"), "no such day");
    assertEquals(InputTables.AsOfKind.NONE, InputTables.kind("yesterday"));
    assertEquals(InputTables.AsOfKind.NONE, InputTables.kind("-5"));
    assertEquals("2026-11-30T08:00:00.125+01:00", InputTables.timestamp("2026-11-30T08:00:00.125+01:00"));
    assertEquals("2026-11-30 08:00:00", InputTables.timestamp("2026-11-30T08:00:00"));
  }

  @Test
  void tableAndAsOfAreRead() {
    JobSettings s = read("input.table = \"lake.telemetry.fleet\"\ninput.as-of = \"42\"\n");
    assertTrue(s.input().fromTable());
    assertEquals("lake.telemetry.fleet", s.input().source());
    assertEquals("42", s.input().asOf());
    assertEquals("input.table = lake.telemetry.fleet", s.input().named());
    assertEquals("", s.input().withoutWhere().path());
    assertEquals("42", s.input().withoutWhere().asOf(), "the filter-less input keeps the snapshot");
  }

  @Test
  void exactlyOneSource() {
    assertEquals(List.of("job.conf:2: input.path = /in and input.table = lake.a.b are both set: the input is either a"
        + " folder (input.path) or a catalog table (input.table); remove one"),
        problems("input.path = \"/in\"\ninput.table = \"lake.a.b\"\n"));
    assertEquals(List.of("job.conf: input.path and input.table are both empty: set exactly one (input.path = a"
        + " Parquet or CSV folder, input.table = a catalog table such as catalog.db.table)"), problems(""));
    List<String> name = problems("input.table = \"lake.a b\"\n");
    assertTrue(name.get(0).contains("input.table = lake.a b: not a table name"), name.toString());
  }

  @Test
  void asOfRules() {
    List<String> bad = problems("input.table = \"lake.a.b\"\ninput.as-of = \"soon\"\n");
    assertEquals(List.of("job.conf:2: input.as-of = soon: not a snapshot id (digits only, e.g. 4923180334123) nor a"
        + " time (ISO-8601, e.g. 2026-11-30T08:00:00Z, or yyyy-MM-dd HH:mm:ss)"), bad);
    List<String> folder = problems("input.path = \"/in\"\ninput.as-of = \"42\"\n");
    assertTrue(folder.get(0).contains("input.as-of = 42 without input.table"), folder.toString());
  }
}
