/*
 * stage.h — where a build's time goes: stage names marked by the pipeline,
 * their wall times printed to stderr by `build --timings`, and a one-line
 * progress display on stderr while a stage runs past a second (only when
 * stderr is a terminal). Nothing here touches the report's bytes.
 */
#ifndef FITPROOF_STAGE_H
#define FITPROOF_STAGE_H

#include <stdbool.h>
#include <stddef.h>

/* Starts recording: timings prints the table at stage_finish; progress
   shows the running stage on stderr when it is a terminal. */
void stage_start(bool timings, bool progress);
/* Ends the running stage and begins the one named (printf format, up to
   80 characters). Free to call when recording never started. */
void stage_begin(const char *format, ...) __attribute__((format(printf, 1, 2)));
/* Rows done of the running stage, for the progress line (cheap: a store). */
void stage_rows(size_t done, size_t total);
/* From now on the calling thread's stage_rows are not shown: a helper
   thread's passes would make the count jump between two passes. */
void stage_quiet_thread(void);
/* Ends the last stage, clears the progress line, prints the timings. */
void stage_finish(void);

#endif
