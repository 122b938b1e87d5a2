package io.eigenmill.monitor;

import java.util.List;

/**
 * A seeded sample of scored rows, of bounded size, for the report's score map.
 *
 * @param keyValues one list of key values (as text) per sampled row, in {@code keyNames} order
 * @param scores one array per sampled row: its first (up to three) component scores
 * @param clusters the cluster of each sampled row, or null when no clustering ran
 */
public record ScoreSample(List<String> keyNames, List<List<String>> keyValues, double[][] scores, int[] clusters) {}
