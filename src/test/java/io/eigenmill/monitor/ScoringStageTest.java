package io.eigenmill.monitor;

import static org.junit.jupiter.api.Assertions.assertEquals;

import org.junit.jupiter.api.Test;

/** The width of the monitoring series' buckets in words; check values by hand arithmetic in the comments. */
class ScoringStageTest {
  @Test
  void widthsInSecondsHoursAndDays() {
    assertEquals("64 s", ScoringStage.bucketWords(64, false));
    // 4096 / 3600 = 1.1378 hours
    assertEquals("4096 s, 1.14 hours", ScoringStage.bucketWords(4096, false));
    // 131072 / 86400 = 1.5170 days
    assertEquals("131072 s, 1.52 days", ScoringStage.bucketWords(131_072, true));
  }

  @Test
  void aDateColumnWithBucketsNarrowerThanADayIsPerDay() {
    // the values of a date column are whole days: a 1 s bucket holds one day's rows
    assertEquals("day", ScoringStage.bucketWords(1, true));
    assertEquals("day", ScoringStage.bucketWords(65_536, true));
  }
}
