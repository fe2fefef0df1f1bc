/*
 * stage.c — stage timings and the progress line (stage.h). A helper
 * thread wakes five times a second and redraws one line on stderr while a
 * stage has run past a second; the pipeline only stores the stage's name,
 * start and rows done, under a mutex (stage changes are rare). The clock
 * is CLOCK_MONOTONIC and only ever reaches stderr, so reports stay
 * byte-identical.
 */
#define _POSIX_C_SOURCE 200809L
#include "stage.h"

#include <limits.h>
#include <pthread.h>
#include <stdarg.h>
#include <stdatomic.h>
#include <stdio.h>
#include <string.h>
#include <sys/resource.h>
#include <time.h>
#include <unistd.h>

enum { STAGE_NAME = 96, STAGE_MAX = 256 };

static struct {
    bool on, timings, progress;
    pthread_mutex_t lock;
    pthread_t thread;
    bool thread_running, stop;
    char name[STAGE_NAME];
    double started;
    bool shown; /* the progress line is on screen */
    size_t count;
    char names[STAGE_MAX][STAGE_NAME];
    double seconds[STAGE_MAX];
    /* the process's resident high-water mark at each stage's end */
    double peak_mb[STAGE_MAX];
    atomic_size_t done, total;
    unsigned serial; /* counts stage_begin calls: a new stage for the progress line */
} st = {.lock = PTHREAD_MUTEX_INITIALIZER};

static double now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_MONOTONIC, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static void clear_line(void)
{
    if (st.shown) {
        fputs("\r\033[K", stderr);
        fflush(stderr);
        st.shown = false;
    }
}

/* A count as people read it: 950, 12 thousand, 7.3 million. */
static void count_words(char *out, size_t size, double count)
{
    if (count < 1e4)
        snprintf(out, size, "%.0f", count);
    else if (count < 1e6)
        snprintf(out, size, "%.0f thousand", count / 1e3);
    else if (count < 1e9)
        snprintf(out, size, "%.1f million", count / 1e6);
    else
        snprintf(out, size, "%.1f billion", count / 1e9);
}

/* The rows part of the line. A stage makes several passes over the rows;
   when the count falls, a new pass has begun, and the rate is that pass's. */
static void show_rows(double at)
{
    static unsigned serial = UINT_MAX;
    static size_t last_done, pass;
    static double pass_started, last_seen;
    size_t done = atomic_load(&st.done), total = atomic_load(&st.total);
    if (serial != st.serial) {
        serial = st.serial;
        last_done = 0;
        pass = 1;
        pass_started = last_seen = st.started;
    }
    if (done < last_done) {
        pass++;
        pass_started = (last_seen + at) / 2; /* it began between the two looks */
    }
    last_done = done;
    last_seen = at;
    if (total == 0)
        return;
    char rows[32], all[32], rate[32];
    count_words(rows, sizeof rows, (double)done);
    count_words(all, sizeof all, (double)total);
    double seconds = at - pass_started;
    fprintf(stderr, ", pass %zu: %s of %s rows", pass, rows, all);
    if (seconds > 0.1 && done < total) {
        count_words(rate, sizeof rate, (double)done / seconds);
        fprintf(stderr, " (%s rows/s)", rate);
    }
}

static void *progress_thread(void *unused)
{
    (void)unused;
    for (;;) {
        struct timespec nap = {0, 200000000L};
        nanosleep(&nap, NULL);
        pthread_mutex_lock(&st.lock);
        if (st.stop) {
            pthread_mutex_unlock(&st.lock);
            return NULL;
        }
        double at = now(), elapsed = at - st.started;
        if (st.name[0] && elapsed > 1.0) {
            fprintf(stderr, "\r\033[Kfitproof: %s, %.0f s", st.name, elapsed);
            show_rows(at);
            fflush(stderr);
            st.shown = true;
        }
        pthread_mutex_unlock(&st.lock);
    }
}

void stage_start(bool timings, bool progress)
{
    st.on = timings || progress;
    st.timings = timings;
    st.progress = progress && isatty(STDERR_FILENO);
    st.count = 0;
    st.name[0] = '\0';
    st.started = now();
    if (st.progress && pthread_create(&st.thread, NULL, progress_thread, NULL) == 0)
        st.thread_running = true;
}

static double peak_megabytes(void)
{
    struct rusage usage;
    if (getrusage(RUSAGE_SELF, &usage) != 0)
        return 0.0;
    return (double)usage.ru_maxrss * 1024.0 / 1e6; /* Linux: kilobytes */
}

/* Closes the running stage (lock held). */
static void close_stage(void)
{
    if (st.name[0] && st.count < STAGE_MAX) {
        memcpy(st.names[st.count], st.name, STAGE_NAME);
        st.peak_mb[st.count] = peak_megabytes();
        st.seconds[st.count++] = now() - st.started;
    }
    st.name[0] = '\0';
    clear_line();
}

void stage_begin(const char *format, ...)
{
    if (!st.on)
        return;
    pthread_mutex_lock(&st.lock);
    close_stage();
    va_list args;
    va_start(args, format);
    vsnprintf(st.name, sizeof st.name, format, args);
    va_end(args);
    atomic_store(&st.done, 0);
    atomic_store(&st.total, 0);
    st.started = now();
    st.serial++;
    pthread_mutex_unlock(&st.lock);
}

static _Thread_local bool quiet_thread;

void stage_quiet_thread(void)
{
    quiet_thread = true;
}

void stage_rows(size_t done, size_t total)
{
    if (!st.on || quiet_thread)
        return;
    atomic_store(&st.done, done);
    atomic_store(&st.total, total);
}

void stage_finish(void)
{
    if (!st.on)
        return;
    pthread_mutex_lock(&st.lock);
    close_stage();
    st.stop = true;
    pthread_mutex_unlock(&st.lock);
    if (st.thread_running)
        pthread_join(st.thread, NULL);
    st.thread_running = false;
    if (st.timings) {
        double total = 0.0;
        for (size_t k = 0; k < st.count; k++)
            total += st.seconds[k];
        fprintf(stderr, "fitproof: timings (wall seconds; peak resident MB so far)\n");
        for (size_t k = 0; k < st.count; k++)
            fprintf(stderr, "  %8.3f  %5.1f%%  %7.0f MB  %s\n", st.seconds[k],
                    total > 0 ? 100.0 * st.seconds[k] / total : 0.0, st.peak_mb[k],
                    st.names[k]);
        fprintf(stderr, "  %8.3f  total\n", total);
    }
    st.on = false;
    st.stop = false;
}
