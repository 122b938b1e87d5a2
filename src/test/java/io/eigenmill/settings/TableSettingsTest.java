package io.eigenmill.settings;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.testing.JobFiles;
import org.junit.jupiter.api.Test;

/** output.table-prefix and output.table-mode as read from a job file (the keys and words of the task's contract). */
class TableSettingsTest {
  private static final String BASE = "input.path = \"x\"\noutput.path = \"y\"\n";

  @Test
  void defaultsAreNoTablesAndFailIfExists() {
    JobSettings s = JobFiles.settings(BASE);
    assertFalse(s.output().writesTables());
    assertEquals(Choices.TableMode.FAIL_IF_EXISTS, s.output().tableMode());
  }

  @Test
  void readsPrefixAndMode() {
    JobSettings s = JobFiles.settings(BASE + "output.table-prefix = \"catalog.db.fleet_\"\n"
        + "output.table-mode = overwrite-partitions\n");
    assertEquals("catalog.db.fleet_", s.output().tablePrefix());
    assertEquals(Choices.TableMode.OVERWRITE_PARTITIONS, s.output().tableMode());
  }

  @Test
  void aBadModeIsOneMessageNamingKeyValueAndChoices() {
    InvalidJobException e = assertThrows(InvalidJobException.class,
        () -> JobFiles.settings(BASE + "output.table-mode = upsert\n"));
    assertEquals(1, e.problems().size(), e.problems().toString());
    String problem = e.problems().get(0);
    assertTrue(problem.contains("output.table-mode = \"upsert\"")
        && problem.contains("append, overwrite-partitions, fail-if-exists"), problem);
  }
}
