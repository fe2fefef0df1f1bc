/*
 * dates.h — ISO 8601 calendar dates and date-times (the extended format:
 * 2024-03-01, 2024-03-01T08:30, 2024-03-01 08:30:15.25+01:00) read into
 * days since 1970-01-01 in UTC, and written back. Shared by the spec
 * (origins, where values) and the data stage (cells of a date column).
 */
#ifndef FITPROOF_UTIL_DATES_H
#define FITPROOF_UTIL_DATES_H

#include <stdbool.h>
#include <stddef.h>

typedef struct {
    double days;     /* since 1970-01-01T00:00Z; for a date-time without an
                        offset, since 1970-01-01T00:00 in its own clock */
    bool has_time;   /* a time of day was written */
    bool has_offset; /* Z or ±hh[:mm] was written */
} date_value;

/* Parses the whole of [text, text + length) as a date or a date-time
   (T or one space between them; seconds and their fraction optional; Z,
   ±hh, ±hhmm or ±hh:mm). Checks the calendar (month lengths, leap years).
   False for anything else. */
bool date_parse(const char *text, size_t length, date_value *out);

/* Parses a fixed offset from UTC, "UTC", "Z" or ±hh:mm, into minutes
   east of Greenwich. False for anything else (named zones included). */
bool date_parse_zone(const char *text, int *minutes);

/* Writes days since 1970-01-01 as YYYY-MM-DD, or YYYY-MM-DDThh:mm:ssZ when
   it is not a whole day (to the nearest second). out needs 32 bytes. */
void date_format(double days, char *out, size_t size);

#endif
