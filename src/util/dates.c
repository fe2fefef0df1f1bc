/*
 * dates.c — ISO 8601 dates and date-times to days since 1970-01-01 and
 * back. The day number of a civil date is Hinnant's days_from_civil
 * ("chrono-Compatible Low-Level Date Algorithms", H. Hinnant, 2013): the
 * proleptic Gregorian calendar with the year starting on 1 March, so that
 * the leap day falls last; civil_from_days is its inverse.
 */
#include "dates.h"

#include <math.h>
#include <stdint.h>
#include <stdio.h>

static long days_from_civil(long y, unsigned m, unsigned d)
{
    y -= m <= 2;
    long era = (y >= 0 ? y : y - 399) / 400;
    unsigned yoe = (unsigned)(y - era * 400);
    unsigned doy = (153 * (m + (m > 2 ? -3 : 9)) + 2) / 5 + d - 1;
    unsigned doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    return era * 146097 + (long)doe - 719468;
}

static void civil_from_days(long z, long *y, unsigned *m, unsigned *d)
{
    z += 719468;
    long era = (z >= 0 ? z : z - 146096) / 146097;
    unsigned doe = (unsigned)(z - era * 146097);
    unsigned yoe = (doe - doe / 1460 + doe / 36524 - doe / 146096) / 365;
    unsigned doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    unsigned mp = (5 * doy + 2) / 153;
    *d = doy - (153 * mp + 2) / 5 + 1;
    *m = mp < 10 ? mp + 3 : mp - 9;
    *y = (long)yoe + era * 400 + (*m <= 2);
}

static bool leap(long y)
{
    return (y % 4 == 0 && y % 100 != 0) || y % 400 == 0;
}

/* n digits at *p into *out, moving *p. */
static bool digits(const char **p, const char *end, int n, long *out)
{
    long v = 0;
    for (int i = 0; i < n; i++, (*p)++) {
        if (*p >= end || **p < '0' || **p > '9')
            return false;
        v = v * 10 + (**p - '0');
    }
    *out = v;
    return true;
}

/* Z, ±hh, ±hhmm or ±hh:mm at p, ending at end; minutes east of UTC. */
static bool offset(const char *p, const char *end, int *minutes)
{
    if (end - p == 1 && *p == 'Z') {
        *minutes = 0;
        return true;
    }
    if (p >= end || (*p != '+' && *p != '-'))
        return false;
    int sign = *p++ == '-' ? -1 : 1;
    long h, m = 0;
    if (!digits(&p, end, 2, &h))
        return false;
    if (p < end && *p == ':')
        p++;
    if (p < end && !digits(&p, end, 2, &m))
        return false;
    if (p != end || h > 23 || m > 59)
        return false;
    *minutes = sign * (int)(h * 60 + m);
    return true;
}

bool date_parse(const char *text, size_t length, date_value *out)
{
    const char *p = text, *end = text + length;
    long y, mo, d;
    if (!digits(&p, end, 4, &y) || p >= end || *p++ != '-' || !digits(&p, end, 2, &mo) ||
        p >= end || *p++ != '-' || !digits(&p, end, 2, &d))
        return false;
    static const unsigned month_days[] = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
    if (mo < 1 || mo > 12 || d < 1 ||
        (unsigned long)d > month_days[mo - 1] + (mo == 2 && leap(y)))
        return false;
    date_value v = {(double)days_from_civil(y, (unsigned)mo, (unsigned)d), false, false};
    if (p == end) {
        *out = v;
        return true;
    }
    if (*p != 'T' && *p != ' ')
        return false;
    p++;
    long h, mi, s = 0;
    double fraction = 0;
    if (!digits(&p, end, 2, &h) || p >= end || *p++ != ':' || !digits(&p, end, 2, &mi))
        return false;
    if (p < end && *p == ':') {
        p++;
        if (!digits(&p, end, 2, &s))
            return false;
        if (p < end && (*p == '.' || *p == ',')) {
            p++;
            double scale = 0.1;
            const char *start = p;
            for (; p < end && *p >= '0' && *p <= '9'; p++, scale /= 10)
                fraction += (*p - '0') * scale;
            if (p == start)
                return false;
        }
    }
    if (h > 23 || mi > 59 || s > 59) /* leap seconds and 24:00 are not taken */
        return false;
    double seconds = (double)(h * 3600 + mi * 60 + s) + fraction;
    if (p < end) {
        int minutes;
        if (!offset(p, end, &minutes))
            return false;
        seconds -= minutes * 60.0;
        v.has_offset = true;
    }
    v.has_time = true;
    v.days += seconds / 86400.0;
    *out = v;
    return true;
}

bool date_parse_zone(const char *text, int *minutes)
{
    const char *end = text;
    while (*end)
        end++;
    if ((end - text == 3 && text[0] == 'U' && text[1] == 'T' && text[2] == 'C')) {
        *minutes = 0;
        return true;
    }
    return offset(text, end, minutes);
}

void date_format(double days, char *out, size_t size)
{
    double whole = floor(days);
    long day = (long)whole;
    long seconds = lround((days - whole) * 86400.0);
    if (seconds == 86400)
        day++, seconds = 0;
    long y;
    unsigned m, d;
    civil_from_days(day, &y, &m, &d);
    if (seconds == 0)
        snprintf(out, size, "%04ld-%02u-%02u", y, m, d);
    else
        snprintf(out, size, "%04ld-%02u-%02uT%02ld:%02ld:%02ldZ", y, m, d, seconds / 3600,
                 seconds / 60 % 60, seconds % 60);
}
