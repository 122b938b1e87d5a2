package io.eigenmill.demo;

/**
 * The base metric columns of the fleet telemetry table, in column order. Each names its Spark type, whether the
 * sensor behind it may drop out (null cells), and its unit. The ordinal is the metric's slot in the generator's
 * per-row value array. Free of Spark, like the rest of the model.
 */
enum Metric {
  // processor
  CPU_USER("cpu_user_pct", Kind.DOUBLE, "%"),
  CPU_SYSTEM("cpu_system_pct", Kind.DOUBLE, "%"),
  CPU_IOWAIT("cpu_iowait_pct", Kind.DOUBLE, "%"),
  CPU_STEAL("cpu_steal_pct", Kind.DOUBLE, "%"),
  CPU_SOFTIRQ("cpu_softirq_pct", Kind.DOUBLE, "%"),
  LOAD_1M("load_avg_1m", Kind.DOUBLE, "runnable tasks"),
  LOAD_5M("load_avg_5m", Kind.DOUBLE, "runnable tasks"),
  LOAD_15M("load_avg_15m", Kind.DOUBLE, "runnable tasks"),
  CONTEXT_SWITCHES("context_switches_k_per_s", Kind.DOUBLE, "thousand/s"),
  CPU_FREQ("cpu_freq_ghz", Kind.FLOAT, "GHz"),
  // memory
  MEM_USED("mem_used_pct", Kind.DOUBLE, "%"),
  MEM_AVAILABLE("mem_available_gib", Kind.DOUBLE, "GiB"),
  PAGE_CACHE("page_cache_gib", Kind.DOUBLE, "GiB"),
  SWAP_USED("swap_used_mib", Kind.DOUBLE, "MiB"),
  MAJOR_FAULTS("major_faults_per_s", Kind.DOUBLE, "1/s"),
  OPEN_FILES("open_files", Kind.INT, "count"),
  // cache store disks
  DISK_READ("disk_read_mb_per_s", Kind.DOUBLE, "MB/s"),
  DISK_WRITE("disk_write_mb_per_s", Kind.DOUBLE, "MB/s"),
  DISK_READ_IOPS("disk_read_iops", Kind.DOUBLE, "1/s"),
  DISK_WRITE_IOPS("disk_write_iops", Kind.DOUBLE, "1/s"),
  DISK_UTIL("disk_util_pct", Kind.DOUBLE, "%"),
  DISK_QUEUE("disk_queue_depth", Kind.DOUBLE, "requests"),
  DISK_READ_LATENCY("disk_read_latency_ms", Kind.DOUBLE, "ms"),
  DISK_WRITE_LATENCY("disk_write_latency_ms", Kind.DOUBLE, "ms"),
  STORE_USED("cache_store_used_pct", Kind.DOUBLE, "%"),
  // network
  NET_RX("net_rx_gbps", Kind.DOUBLE, "Gbit/s"),
  NET_TX("net_tx_gbps", Kind.DOUBLE, "Gbit/s"),
  NET_RX_KPPS("net_rx_kpps", Kind.DOUBLE, "thousand packets/s"),
  NET_TX_KPPS("net_tx_kpps", Kind.DOUBLE, "thousand packets/s"),
  RETRANSMIT("net_retransmit_pct", Kind.DOUBLE, "% of segments"),
  RX_DROPS("net_rx_drops_per_s", Kind.DOUBLE, "1/s"),
  TCP_CONNECTIONS("tcp_connections", Kind.LONG, "count"),
  SYN_BACKLOG("tcp_syn_backlog", Kind.INT, "count"),
  TLS_HANDSHAKES("tls_handshakes_per_s", Kind.DOUBLE, "1/s"),
  // HTTP front end
  HTTP_REQUESTS("http_requests_per_s", Kind.DOUBLE, "1/s"),
  HTTP_4XX("http_4xx_per_s", Kind.DOUBLE, "1/s"),
  HTTP_5XX("http_5xx_per_s", Kind.DOUBLE, "1/s"),
  TTFB_P50("http_ttfb_p50_ms", Kind.DOUBLE, "ms"),
  TTFB_P99("http_ttfb_p99_ms", Kind.DOUBLE, "ms"),
  OBJECT_SIZE("http_mean_object_kib", Kind.DOUBLE, "KiB"),
  WORKERS_BUSY("worker_threads_busy", Kind.INT, "count"),
  // cache
  HIT_RATIO("cache_hit_ratio", Kind.DOUBLE, "fraction"),
  RAM_HIT_RATIO("ram_cache_hit_ratio", Kind.DOUBLE, "fraction"),
  BYTES_SERVED("cache_bytes_served_gib", Kind.DOUBLE, "GiB per interval"),
  ORIGIN_FETCH("origin_fetch_gbps", Kind.DOUBLE, "Gbit/s"),
  ORIGIN_REQUESTS("origin_requests_per_s", Kind.DOUBLE, "1/s"),
  EVICTIONS("cache_evictions_per_s", Kind.DOUBLE, "1/s"),
  CACHE_OBJECTS("cache_objects_millions", Kind.DOUBLE, "million objects"),
  // temperatures and fans
  CPU_TEMP("cpu_temp_c", Kind.DOUBLE, "degC"),
  INLET_TEMP("inlet_temp_c", Kind.DOUBLE, "degC", true),
  EXHAUST_TEMP("exhaust_temp_c", Kind.DOUBLE, "degC"),
  NVME_TEMP("nvme_temp_c", Kind.DOUBLE, "degC", true),
  DIMM_TEMP("dimm_temp_c", Kind.DOUBLE, "degC"),
  NIC_TEMP("nic_temp_c", Kind.DOUBLE, "degC"),
  FAN_1("fan_1_rpm", Kind.DOUBLE, "rpm"),
  FAN_2("fan_2_rpm", Kind.DOUBLE, "rpm"),
  FAN_3("fan_3_rpm", Kind.DOUBLE, "rpm"),
  FAN_4("fan_4_rpm", Kind.DOUBLE, "rpm", true),
  // power
  POWER("power_w", Kind.DOUBLE, "W"),
  PSU_EFFICIENCY("psu_efficiency_pct", Kind.DOUBLE, "%"),
  PSU_VOLTAGE("psu_input_voltage_v", Kind.DOUBLE, "V"),
  // time keeping
  NTP_OFFSET("ntp_offset_ms", Kind.DOUBLE, "ms");

  /** How a metric is stored (the Spark types are mapped where the schema is built, keeping this class Spark-free). */
  enum Kind {
    DOUBLE,
    FLOAT,
    INT,
    LONG
  }

  static final Metric[] ALL = values();
  static final int COUNT = ALL.length;

  final String column;
  final Kind kind;
  final String unit;
  /** True for the sensors that drop out now and then: their column has a small share of nulls. */
  final boolean dropsOut;

  Metric(String column, Kind kind, String unit) {
    this(column, kind, unit, false);
  }

  Metric(String column, Kind kind, String unit, boolean dropsOut) {
    this.column = column;
    this.kind = kind;
    this.unit = unit;
    this.dropsOut = dropsOut;
  }
}
