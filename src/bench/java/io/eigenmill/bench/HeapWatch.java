package io.eigenmill.bench;

import com.sun.management.GarbageCollectionNotificationInfo;
import java.lang.management.GarbageCollectorMXBean;
import java.lang.management.ManagementFactory;
import java.lang.management.MemoryPoolMXBean;
import java.lang.management.MemoryType;
import java.lang.management.MemoryUsage;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.concurrent.atomic.AtomicLong;
import javax.management.Notification;
import javax.management.NotificationEmitter;
import javax.management.NotificationListener;
import javax.management.openmbean.CompositeData;

/**
 * The peak heap in use while it watches, from two sources: the heap in use just before every garbage collection (the
 * exact local maxima, from the collectors' notifications) and a sample of the heap in use every
 * {@link #SAMPLE_MILLIS} ms (for a peak that no collection followed). It counts garbage not yet collected: both
 * collectors measured here (G1 and the parallel one) let the old generation fill before they collect it, so a job
 * that allocates fast shows a peak near the maximum heap whatever it keeps alive. In local mode the executors run in
 * the driver's JVM, so this is the whole job's heap.
 */
final class HeapWatch implements AutoCloseable {
  static final long SAMPLE_MILLIS = 10;

  private final AtomicLong peak = new AtomicLong();
  private final Set<String> heapPools = new HashSet<>();
  private final List<NotificationEmitter> emitters = new ArrayList<>();
  private final NotificationListener listener = this::onGc;
  private final Thread sampler;
  private volatile boolean running = true;

  private HeapWatch() {
    for (MemoryPoolMXBean pool : ManagementFactory.getMemoryPoolMXBeans()) {
      if (pool.getType() == MemoryType.HEAP) {
        heapPools.add(pool.getName());
      }
    }
    for (GarbageCollectorMXBean gc : ManagementFactory.getGarbageCollectorMXBeans()) {
      if (gc instanceof NotificationEmitter emitter) {
        emitter.addNotificationListener(listener, null, null);
        emitters.add(emitter);
      }
    }
    sampler = new Thread(this::sample, "eigenmill-bench-heap-watch");
    sampler.setDaemon(true);
  }

  static HeapWatch start() {
    HeapWatch w = new HeapWatch();
    w.observe(ManagementFactory.getMemoryMXBean().getHeapMemoryUsage().getUsed());
    w.sampler.start();
    return w;
  }

  /** The largest heap in use seen so far, in bytes. */
  long peakBytes() {
    observe(ManagementFactory.getMemoryMXBean().getHeapMemoryUsage().getUsed());
    return peak.get();
  }

  private void sample() {
    while (running) {
      observe(ManagementFactory.getMemoryMXBean().getHeapMemoryUsage().getUsed());
      try {
        Thread.sleep(SAMPLE_MILLIS);
      } catch (InterruptedException e) {
        return;
      }
    }
  }

  private void onGc(Notification n, Object handback) {
    if (!GarbageCollectionNotificationInfo.GARBAGE_COLLECTION_NOTIFICATION.equals(n.getType())) {
      return;
    }
    var info = GarbageCollectionNotificationInfo.from((CompositeData) n.getUserData());
    long before = 0;
    for (Map.Entry<String, MemoryUsage> e : info.getGcInfo().getMemoryUsageBeforeGc().entrySet()) {
      if (heapPools.contains(e.getKey())) {
        before += e.getValue().getUsed();
      }
    }
    observe(before);
  }

  private void observe(long used) {
    peak.accumulateAndGet(used, Math::max);
  }

  @Override
  public void close() {
    running = false;
    sampler.interrupt();
    for (NotificationEmitter e : emitters) {
      try {
        e.removeNotificationListener(listener);
      } catch (javax.management.ListenerNotFoundException ignored) {
        // already gone: nothing to remove
      }
    }
  }
}
