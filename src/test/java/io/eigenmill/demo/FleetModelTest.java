package io.eigenmill.demo;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.demo.FleetTelemetryGenerator.FleetSpec;
import java.time.LocalDate;
import java.util.EnumSet;
import java.util.HashSet;
import java.util.Set;
import org.junit.jupiter.api.Test;

/** The generator's model without Spark: sizing, fleet layout, fault schedule, row determinism and couplings. */
class FleetModelTest {
  private static final long SEED = 20261201L;
  private static final long START_DAY = LocalDate.parse("2026-11-02").toEpochDay();

  @Test
  void sizeGrowsHostsAndTimeTogether() {
    assertEquals(240, FleetTelemetryGenerator.hostsFor(120_000));
    assertEquals(500, FleetSpec.defaults().intervals());
    assertEquals(980, FleetTelemetryGenerator.hostsFor(2_000_000));
    assertEquals(12, FleetTelemetryGenerator.hostsFor(100));
    assertEquals(7, FleetTelemetryGenerator.hostsFor(7));
    assertEquals(1, FleetTelemetryGenerator.hostsFor(1));
    FleetSpec spec = FleetSpec.defaults().withRows(2_999);
    assertTrue(spec.hosts() * spec.intervals() >= 2_999 && spec.hosts() * (spec.intervals() - 1) < 2_999);
  }

  @Test
  void specRejectsImpossibleValuesAndNamesThem() {
    IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
        () -> new FleetSpec(0, 1, -1, 0, "2026-13-01"));
    for (String part : new String[] {"rows = 0", "extraMetrics = -1", "partitions = 0", "startDate = 2026-13-01"}) {
      assertTrue(e.getMessage().contains(part), e.getMessage());
    }
  }

  @Test
  void smallFleetHasEveryRegionWorkloadAndGeneration() {
    Fleet fleet = new Fleet(SEED, 38, 79);
    Set<Region> regions = EnumSet.noneOf(Region.class);
    Set<Workload> workloads = EnumSet.noneOf(Workload.class);
    Set<Hardware> generations = EnumSet.noneOf(Hardware.class);
    Set<String> names = new HashSet<>();
    for (int h = 0; h < fleet.hosts; h++) {
      regions.add(fleet.region[h]);
      workloads.add(fleet.workload[h]);
      generations.add(fleet.hardware[h]);
      assertTrue(fleet.name[h].matches("edge-" + fleet.region[h].code + "-\\d{3}"), fleet.name[h]);
      names.add(fleet.name[h]);
    }
    assertEquals(EnumSet.allOf(Region.class), regions);
    assertEquals(EnumSet.allOf(Workload.class), workloads);
    assertEquals(EnumSet.allOf(Hardware.class), generations);
    assertEquals(38, names.size(), "host names are unique");
  }

  @Test
  void faultsAreFewAndTheirWindowsFitTheSpan() {
    Fleet fleet = new Fleet(SEED, 240, 500);
    Set<Fault> kinds = EnumSet.noneOf(Fault.class);
    int faulty = 0;
    for (int h = 0; h < fleet.hosts; h++) {
      if (fleet.fault[h] == null) {
        continue;
      }
      faulty++;
      kinds.add(fleet.fault[h]);
      long length = fleet.faultEnd[h] - fleet.faultStart[h];
      assertTrue(length >= 30 && length <= 60, "window of 6-12 % of 500 intervals: " + length);
      assertTrue(fleet.faultStart[h] >= 50 && fleet.faultEnd[h] <= 499, "inside the span, before the last interval");
      assertEquals(fleet.fault[h], fleet.faultAt(h, fleet.faultStart[h]));
      assertNull(fleet.faultAt(h, fleet.faultEnd[h]));
    }
    assertEquals(6, faulty, "max(4, 240 / 40) faulty hosts");
    assertEquals(EnumSet.allOf(Fault.class), kinds);
    Fleet tooShort = new Fleet(SEED, 240, 7);
    for (int h = 0; h < tooShort.hosts; h++) {
      assertNull(tooShort.fault[h], "no fault when fewer than 8 intervals");
    }
  }

  @Test
  void aRowDependsOnlyOnSeedHostAndInterval() {
    Fleet fleet = new Fleet(SEED, 240, 500);
    TelemetryModel model = new TelemetryModel(SEED, fleet, START_DAY, new NoiseSource());
    model.compute(17, 123);
    double[] first = model.values.clone();
    boolean[] firstMissing = model.missing.clone();
    for (int i = 0; i < 50; i++) {
      model.compute(i, 400 - i); // other rows in between, as another partition order would
    }
    TelemetryModel fresh = new TelemetryModel(SEED, new Fleet(SEED, 240, 500), START_DAY, new NoiseSource());
    fresh.compute(17, 123);
    model.compute(17, 123);
    assertArrayEquals(first, model.values);
    assertArrayEquals(first, fresh.values);
    assertArrayEquals(firstMissing, fresh.missing);
    TelemetryModel otherSeed = new TelemetryModel(SEED + 1, new Fleet(SEED + 1, 240, 500), START_DAY,
        new NoiseSource());
    otherSeed.compute(17, 123);
    assertNotEquals(first[Metric.POWER.ordinal()], otherSeed.values[Metric.POWER.ordinal()]);
  }

  /** One day of the default fleet (69,120 rows): the couplings the model promises show up as correlations. */
  @Test
  void thermalAndLoadCouplingsHold() {
    Fleet fleet = new Fleet(SEED, 240, 288);
    TelemetryModel model = new TelemetryModel(SEED, fleet, START_DAY, new NoiseSource());
    Metric[] metrics = {Metric.CPU_USER, Metric.CPU_TEMP, Metric.FAN_1, Metric.POWER, Metric.EXHAUST_TEMP,
        Metric.INLET_TEMP};
    int n = 240 * 288;
    double[][] v = new double[metrics.length][n];
    for (int r = 0; r < n; r++) {
      model.compute(r % 240, r / 240);
      for (int k = 0; k < metrics.length; k++) {
        v[k][r] = model.values[metrics[k].ordinal()];
      }
    }
    // measured on this fleet at 0.86, 0.66, 0.73 and 0.76; the bounds leave room for tuning without losing the shape
    assertTrue(correlation(v[1], v[0]) > 0.7, "CPU temperature follows CPU load");
    assertTrue(correlation(v[2], v[1]) > 0.5, "fans follow CPU temperature");
    assertTrue(correlation(v[3], v[0]) > 0.6, "power follows CPU load");
    assertTrue(correlation(v[4], v[5]) > 0.6, "exhaust follows inlet");
  }

  /** 200,000 draws: the mean's standard error is 0.0022 and the variance's 0.0032; bounds at about 5 of them. */
  @Test
  void noiseIsStandardNormalAndKeysSeparateStreams() {
    NoiseSource noise = new NoiseSource();
    noise.reset(NoiseSource.key(1, 2, 3, 4));
    int n = 200_000;
    double sum = 0;
    double squares = 0;
    for (int i = 0; i < n; i++) {
      double g = noise.gaussian();
      sum += g;
      squares += g * g;
    }
    double mean = sum / n;
    assertEquals(0, mean, 0.011);
    assertEquals(1, squares / n - mean * mean, 0.016);
    Set<Long> keys = new HashSet<>();
    for (long a = 0; a < 20; a++) {
      for (long b = 0; b < 20; b++) {
        keys.add(NoiseSource.key(SEED, 21, a, b));
        keys.add(NoiseSource.key(SEED, 22, a, b));
        keys.add(NoiseSource.key(SEED + 1, 21, a, b));
      }
    }
    assertEquals(1200, keys.size(), "distinct (seed, purpose, a, b) give distinct keys");
  }

  private static double correlation(double[] a, double[] b) {
    double ma = 0;
    double mb = 0;
    for (int i = 0; i < a.length; i++) {
      ma += a[i];
      mb += b[i];
    }
    ma /= a.length;
    mb /= b.length;
    double sab = 0;
    double saa = 0;
    double sbb = 0;
    for (int i = 0; i < a.length; i++) {
      sab += (a[i] - ma) * (b[i] - mb);
      saa += (a[i] - ma) * (a[i] - ma);
      sbb += (b[i] - mb) * (b[i] - mb);
    }
    return sab / Math.sqrt(saa * sbb);
  }
}
