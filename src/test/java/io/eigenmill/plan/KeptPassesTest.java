package io.eigenmill.plan;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.engine.KeptBatches;
import io.eigenmill.testing.SparkSuite;
import org.junit.jupiter.api.Test;

/**
 * Whether a multi-pass fit keeps its features in memory: by the rule's own arithmetic, 8 bytes a cell against 80% of
 * the free storage memory Spark's status tracker reports (common practice, no source: a memory budget with headroom).
 */
class KeptPassesTest extends SparkSuite {

  @Test
  void theDecisionFollowsTheFreeStorageMemory() throws InterruptedException {
    // the suite's session is shared: what earlier tests left cached can fill its storage memory (the rule then
    // rightly streams), so this test frees it first and waits for the status tracker, which learns of it
    // asynchronously, to report free memory
    spark.catalog().clearCache();
    for (var rdd : scala.collection.JavaConverters.asJavaCollection(spark.sparkContext().getPersistentRDDs()
        .values())) {
      rdd.unpersist(true);
    }
    long deadline = System.nanoTime() + 10_000_000_000L;
    while (KeptBatches.freeStorage(spark) < (1L << 20) && System.nanoTime() < deadline) {
      Thread.sleep(50);
    }
    KeptPasses.Decision small = KeptPasses.decide(spark, 1000, 10, 4, true);
    assertTrue(small.keep(), small.line());
    assertEquals(1000L * 10 * KeptBatches.BYTES_PER_CELL, small.bytes());
    assertTrue(small.line().contains("passes 2..4 scan memory"), small.line());
    // more than the whole storage memory of the test JVM
    long rows = small.free() / 10 / KeptBatches.BYTES_PER_CELL + 1;
    KeptPasses.Decision big = KeptPasses.decide(spark, rows, 10, 4, true);
    assertFalse(big.keep(), big.line());
    assertTrue(big.line().contains("raise spark.executor.memory"), big.line());
    assertFalse(KeptPasses.decide(spark, -1, 10, 4, true).keep());
    assertFalse(KeptPasses.decide(spark, 1000, 10, 4, false).keep());
    assertFalse(KeptPasses.decide(spark, 1000, 10, 1, true).keep());
  }
}
