package io.eigenmill.math;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.plan.MemoryEstimate;
import io.eigenmill.plan.MethodChoice;
import org.junit.jupiter.api.Test;

/**
 * Blocks by bytes: at most reduce.block-rows rows and at most 8 MiB of doubles. Check values are the arithmetic of
 * the rule itself, 8 MiB / (8 bytes x columns) rounded down (common practice, no source: a byte budget per buffer).
 */
class BlockBudgetTest {

  @Test
  void narrowTablesKeepTheirBlockRows() {
    // d = 100 with the column of ones: 1024 x 101 doubles = 0.8 MiB, under the cap
    assertEquals(1024, BlockBudget.rows(1024, 101));
    // the cap binds from 1024 columns on: 8 MiB / (8 x 1024) = 1024 rows exactly
    assertEquals(1024, BlockBudget.rows(1024, 1024));
    assertEquals(1023, BlockBudget.rows(1024, 1025));
    assertEquals(16, BlockBudget.rows(16, 5000));
  }

  @Test
  void wideTablesGetFewerRowsNeverMoreThanEightMebibytes() {
    // d = 20,000 (+ ones): floor(8,388,608 / 160,008) = 52 rows, 8.4e6 bytes, against 156 MiB for 1024 rows
    assertEquals(52, BlockBudget.rows(1024, 20_001));
    for (int columns : new int[] {1, 7, 1000, 1025, 20_001, 123_457, 2_000_000}) {
      int rows = BlockBudget.rows(1 << 20, columns);
      assertTrue(rows >= 1, "at least one row at " + columns + " columns");
      assertTrue(rows == 1 || 8L * rows * columns <= BlockBudget.BYTES, "within the cap at " + columns);
      assertTrue(8L * (rows + 1) * columns > BlockBudget.BYTES, "the largest count within the cap at " + columns);
    }
  }

  @Test
  void thePlanStatesTheBlockAndItsMemoryFollows() {
    String line = BlockBudget.describe(1024, 20_001);
    assertTrue(line.startsWith("52 rows x 20001 columns, 7.93 MiB"), line);
    assertTrue(line.contains("capped at 8 MiB") && line.contains("156.3 MiB"), line);
    assertTrue(BlockBudget.describe(1024, 101).contains("reduce.block-rows"), BlockBudget.describe(1024, 101));
    // the covariance estimate of a task: its d x d Gram, the (d + 1)^2 Gram of a block, and the block itself, now
    // 52 x 20,001 doubles rather than 1024 x 20,001
    var reduce = io.eigenmill.testing.JobFiles.settings("input.path = \"/nowhere\"\noutput.path = \"/nowhere-out\"\n"
        + "reduce.method = covariance\nreduce.components = 5\n").reduce();
    int d = 20_000;
    MemoryEstimate m = MethodChoice.choose(reduce, d, Long.MAX_VALUE, Long.MAX_VALUE).memory();
    long dd = 8L * d * d;
    assertEquals(dd + 8L * (d + 1) * (d + 1) + 8L * 52 * (d + 1), m.taskBytes());
  }
}
