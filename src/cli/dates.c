/*
 * dates.c — the report's date. A report carries a date only when asked:
 * meta.date in the spec, `build --date YYYY-MM-DD` or `--date now` (the
 * one place fitproof reads the clock), or the SOURCE_DATE_EPOCH variable
 * of reproducible builds (https://reproducible-builds.org/specs/
 * source-date-epoch/: seconds since 1970-01-01 00:00 UTC). The manifest
 * records the date and where it came from, so verify rebuilds with it.
 */
#define _XOPEN_SOURCE 700
#include "cli.h"

#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

static bool utc_date(time_t when, char out[11])
{
    struct tm parts;
    return gmtime_r(&when, &parts) && strftime(out, 11, "%Y-%m-%d", &parts) == 10;
}

/* SOURCE_DATE_EPOCH as a date; false with a message when it is set but
   not a whole number of seconds. */
static bool epoch_date(const char *text, char out[11])
{
    errno = 0;
    char *end;
    long long seconds = strtoll(text, &end, 10);
    bool digits = *text >= '0' && *text <= '9';
    if (!digits || *end != '\0' || errno != 0 || seconds > 253402300799LL /* 9999-12-31 */ ||
        !utc_date((time_t)seconds, out)) {
        fprintf(stderr, "fitproof: error: SOURCE_DATE_EPOCH is '%s', which is not a whole "
                        "number of seconds since 1970-01-01 UTC; set it to one (as in "
                        "$(date +%%s)) or unset it\n",
                text);
        return false;
    }
    return true;
}

bool cli_resolve_report_date(spec *s, const char *date_option)
{
    char date[11];
    if (date_option && s->document.date_source == SPEC_DATE_FROM_SPEC) {
        fprintf(stderr, "fitproof: error: the spec fixes the report's date (meta.date: %s), so "
                        "--date cannot change it; drop one of the two\n",
                s->document.date);
        return false;
    }
    if (date_option) {
        if (strcmp(date_option, "now") == 0 ? !utc_date(time(NULL), date)
                                            : !spec_valid_date(date_option)) {
            fprintf(stderr, "fitproof: error: --date takes a date written YYYY-MM-DD, or now; "
                            "'%s' is neither\n",
                    date_option);
            return false;
        }
        if (strcmp(date_option, "now") != 0)
            snprintf(date, sizeof date, "%s", date_option);
        return spec_set_report_date(s, date, SPEC_DATE_FROM_COMMAND);
    }
    const char *epoch = getenv("SOURCE_DATE_EPOCH");
    if (s->document.date_source == SPEC_DATE_NONE && epoch && *epoch) {
        if (!epoch_date(epoch, date))
            return false;
        return spec_set_report_date(s, date, SPEC_DATE_FROM_EPOCH);
    }
    return true;
}

const char *cli_date_source_name(spec_date_source source)
{
    switch (source) {
    case SPEC_DATE_FROM_SPEC: return "meta.date";
    case SPEC_DATE_FROM_COMMAND: return "--date";
    case SPEC_DATE_FROM_EPOCH: return "SOURCE_DATE_EPOCH";
    default: return NULL;
    }
}

bool cli_repeat_recorded_date(spec *s, const audit_manifest *m)
{
    if (!m->report_date || s->document.date_source == SPEC_DATE_FROM_SPEC)
        return true;
    spec_date_source source = SPEC_DATE_FROM_COMMAND;
    if (m->report_date_source && strcmp(m->report_date_source, "SOURCE_DATE_EPOCH") == 0)
        source = SPEC_DATE_FROM_EPOCH;
    return spec_set_report_date(s, m->report_date, source);
}
