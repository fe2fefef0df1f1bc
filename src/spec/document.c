/*
 * document.c — the document-control keys of meta: the report's date, its
 * revision and revision history, and the people who prepared, reviewed
 * and approved it. Every other meta key stays free text with one value.
 *
 * Dates are calendar dates in ISO 8601's extended form, YYYY-MM-DD, checked
 * against the Gregorian calendar (a 30 February is refused), so that a
 * printed date cannot be read two ways.
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "reader.h"

static const char *const document_keys[] = {"date",        "revision",    "history",
                                            "prepared_by", "reviewed_by", "approved_by",
                                            NULL};

int spec_document_key(const char *key)
{
    for (int i = 0; document_keys[i]; i++)
        if (strcmp(document_keys[i], key) == 0)
            return i;
    return -1;
}

bool spec_valid_date(const char *text)
{
    int year, month, day;
    char tail;
    if (strlen(text) != 10 || text[4] != '-' || text[7] != '-' ||
        sscanf(text, "%4d-%2d-%2d%c", &year, &month, &day, &tail) != 3)
        return false;
    for (int i = 0; i < 10; i++)
        if (i != 4 && i != 7 && (text[i] < '0' || text[i] > '9'))
            return false;
    static const int days[] = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
    bool leap = (year % 4 == 0 && year % 100 != 0) || year % 400 == 0;
    if (year < 1 || month < 1 || month > 12 || day < 1)
        return false;
    return day <= days[month - 1] + (month == 2 && leap);
}

static char *read_date(reader *rd, node *value, const char *what)
{
    char *text = reader_string(rd, value, what);
    if (text && !spec_valid_date(text)) {
        error_at(rd->errors, rd->path, reader_mark(value),
                 "%s must be a calendar date written YYYY-MM-DD (ISO 8601), as in 2026-12-01; "
                 "'%s' is not",
                 what, text);
        free(text);
        text = NULL;
    }
    return text;
}

/* ---- people ----------------------------------------------------------------- */

static const char *const person_keys[] = {"name", "role", NULL};

static void person_pair(reader *rd, size_t key_index, node *key, node *value, void *target)
{
    (void)key;
    spec_person *p = target;
    char **slot = key_index == 0 ? &p->name : &p->role;
    *slot = reader_string(rd, value, key_index == 0 ? "a person's name" : "a person's role");
}

/* A name alone, or {name, role}. */
static bool read_person(reader *rd, node *n, spec_person *out)
{
    memset(out, 0, sizeof *out);
    if (n->type == YAML_SCALAR_NODE) {
        out->name = reader_string(rd, n, "a person's name");
        return out->name != NULL;
    }
    if (!reader_expect(rd, n, YAML_MAPPING_NODE, "a person (a name, or {name, role})"))
        return false;
    size_t errors_before = rd->errors->count;
    reader_walk(rd, n, "a person", person_keys, person_pair, out);
    if (!out->name && rd->errors->count == errors_before)
        error_at(rd->errors, rd->path, reader_mark(n),
                 "a person needs a name, as in {name: R. Okafor, role: QA statistics}");
    return out->name != NULL;
}

/* One person or a list of them. */
static void read_people(reader *rd, node *n, spec_person **out, size_t *count)
{
    size_t wanted = n->type == YAML_SEQUENCE_NODE ? reader_count(n) : 1;
    *out = xcalloc(wanted ? wanted : 1, sizeof **out);
    *count = 0;
    for (size_t i = 0; i < wanted; i++) {
        node *item = n->type == YAML_SEQUENCE_NODE ? reader_item(rd, n, i) : n;
        if (item && read_person(rd, item, &(*out)[*count]))
            (*count)++;
        else if (item)
            free((*out)[*count].role);
    }
}

/* ---- history ------------------------------------------------------------------ */

static const char *const revision_keys[] = {"revision", "date", "change", NULL};

static void revision_pair(reader *rd, size_t key_index, node *key, node *value, void *target)
{
    (void)key;
    spec_revision *r = target;
    if (key_index == 0)
        r->revision = reader_string(rd, value, "a revision");
    else if (key_index == 1)
        r->date = read_date(rd, value, "a revision's date");
    else
        r->change = reader_string(rd, value, "a revision's change");
}

static void read_history(reader *rd, node *list, spec_document *d)
{
    if (!reader_expect(rd, list, YAML_SEQUENCE_NODE,
                       "meta.history (a list of {revision, date, change})"))
        return;
    size_t n = reader_count(list);
    d->history = xcalloc(n ? n : 1, sizeof *d->history);
    for (size_t i = 0; i < n; i++) {
        node *item = reader_item(rd, list, i);
        if (!item || !reader_expect(rd, item, YAML_MAPPING_NODE,
                                    "an entry of meta.history ({revision, date, change})"))
            continue;
        spec_revision *r = &d->history[d->n_history++];
        reader_walk(rd, item, "an entry of meta.history", revision_keys, revision_pair, r);
        if (!r->revision || !r->change)
            error_at(rd->errors, rd->path, reader_mark(item),
                     "an entry of meta.history needs a revision and a change, as in "
                     "{revision: B, date: 2026-12-01, change: November data added}");
    }
}

void spec_parse_document_key(reader *rd, node *key, node *value, spec *s)
{
    spec_document *d = &s->document;
    const char *name = reader_text(key);
    if (strcmp(name, "date") == 0) {
        d->date = read_date(rd, value, "meta.date");
        d->date_at = reader_mark(value);
        d->date_source = d->date ? SPEC_DATE_FROM_SPEC : SPEC_DATE_NONE;
    } else if (strcmp(name, "revision") == 0) {
        d->revision = reader_string(rd, value, "meta.revision");
    } else if (strcmp(name, "history") == 0) {
        read_history(rd, value, d);
    } else if (strcmp(name, "prepared_by") == 0) {
        read_people(rd, value, &d->prepared, &d->n_prepared);
    } else if (strcmp(name, "reviewed_by") == 0) {
        read_people(rd, value, &d->reviewed, &d->n_reviewed);
    } else {
        read_people(rd, value, &d->approved, &d->n_approved);
    }
}

static void free_people(spec_person *people, size_t count)
{
    for (size_t i = 0; i < count; i++) {
        free(people[i].name);
        free(people[i].role);
    }
    free(people);
}

void spec_free_document(spec_document *d)
{
    free(d->date);
    free(d->revision);
    for (size_t i = 0; i < d->n_history; i++) {
        free(d->history[i].revision);
        free(d->history[i].date);
        free(d->history[i].change);
    }
    free(d->history);
    free_people(d->prepared, d->n_prepared);
    free_people(d->reviewed, d->n_reviewed);
    free_people(d->approved, d->n_approved);
    memset(d, 0, sizeof *d);
}

bool spec_set_report_date(spec *s, const char *date, spec_date_source source)
{
    if (!spec_valid_date(date))
        return false;
    free(s->document.date);
    s->document.date = xstrdup(date);
    s->document.date_source = source;
    return true;
}
