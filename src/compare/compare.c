/*
 * compare.c — reads two report folders and lines up what they say.
 *
 * Everything comes from the files a build wrote: results.json (checked
 * against the manifest's digest first, so that a folder edited after it
 * was written is refused rather than compared), the manifest, the
 * archived spec, and the data file the manifest names when it can still
 * be found with the recorded digest.
 *
 * A coefficient "moved" when its change exceeds the combined standard
 * error, |b_new − b_old| > sqrt(se_old² + se_new²). Two runs usually share
 * most of their rows, so the two estimates are not independent and this is
 * a screening rule, not a test (common practice, no source): it points a
 * reader at the coefficients worth a look.
 *
 * Rows are compared as the lines of the two data files below identical
 * headers: a line in both (as many times as it occurs in both) is common,
 * the rest were added or removed. Spec lines are compared with a longest
 * common subsequence after the common first and last lines are set aside,
 * so an edit of a few lines costs little whatever the spec's length.
 */
#include "compare.h"

#include <jansson.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

/* The results.json formats this version reads: fitproof.results/1 to /N. */
#define COMPARE_RESULTS_NEWEST 2
/* Above this many cells the spec difference is not listed line by line. */
#define COMPARE_SPEC_CELLS_MAX 4000000u

typedef struct {
    const char *dir;
    json_t *results;
    audit_manifest *manifest;
    char *spec_text;
    size_t spec_length;
    char *data_text; /* NULL when the data file is gone or changed */
    size_t data_length;
} run;

/* ---- small JSON readers ------------------------------------------------ */

static const char *json_text(const json_t *object, const char *key)
{
    return json_string_value(json_object_get(object, key));
}

static char *json_text_copy(const json_t *object, const char *key)
{
    const char *text = json_text(object, key);
    return text ? xstrdup(text) : NULL;
}

static double json_number(const json_t *object, const char *key)
{
    const json_t *value = json_object_get(object, key);
    return json_is_number(value) ? json_number_value(value) : NAN;
}

static size_t json_count(const json_t *object, const char *key)
{
    const json_t *value = json_object_get(object, key);
    return json_is_integer(value) && json_integer_value(value) > 0
               ? (size_t)json_integer_value(value)
               : 0;
}

/* The element of array whose key equals name, or NULL. */
static json_t *find_by(const json_t *array, const char *key, const char *name)
{
    for (size_t i = 0; i < json_array_size(array); i++) {
        json_t *item = json_array_get(array, i);
        const char *text = json_text(item, key);
        if (text && strcmp(text, name) == 0)
            return item;
    }
    return NULL;
}

/* ---- reading one folder ------------------------------------------------ */

/* The format's version number, or 0 when it is not a results document. */
static int results_version(const json_t *results)
{
    const char *format = json_text(results, "format");
    static const char prefix[] = "fitproof.results/";
    if (!format || strncmp(format, prefix, sizeof prefix - 1) != 0)
        return 0;
    return atoi(format + sizeof prefix - 1);
}

/* Reads dir/name whole, and checks it against the manifest's digest. */
static char *read_listed(const run *r, const char *name, size_t *length, error_list *errors)
{
    char *path = path_join(r->dir, name);
    const char *why;
    char *bytes = file_read_all(path, length, &why);
    src_mark whole = {0, 0};
    if (!bytes) {
        error_at(errors, path, whole, "cannot read it (%s); diff needs two folders written by "
                                      "fitproof build", why);
        free(path);
        return NULL;
    }
    const audit_entry *listed = audit_manifest_find(r->manifest, name);
    char digest[AUDIT_DIGEST_SIZE];
    audit_sha256(bytes, *length, digest);
    if (!listed || strcmp(listed->sha256, digest) != 0) {
        error_at(errors, path, whole,
                 "the file does not match the folder's manifest, so the folder was changed "
                 "after it was written; run 'fitproof verify %s' to see what changed",
                 r->dir);
        free(bytes);
        bytes = NULL;
    }
    free(path);
    return bytes;
}

static bool run_load(run *r, const char *dir, error_list *errors)
{
    memset(r, 0, sizeof *r);
    r->dir = dir;
    r->manifest = audit_manifest_read(dir, errors);
    if (!r->manifest)
        return false;
    size_t length;
    char *text = read_listed(r, "results.json", &length, errors);
    if (!text)
        return false;
    json_error_t parse_error;
    r->results = json_loadb(text, length, 0, &parse_error);
    free(text);
    int version = r->results ? results_version(r->results) : 0;
    if (version < 1 || version > COMPARE_RESULTS_NEWEST) {
        char *path = path_join(dir, "results.json");
        src_mark whole = {0, 0};
        error_at(errors, path, whole,
                 version > COMPARE_RESULTS_NEWEST
                     ? "this results.json was written by a newer fitproof (format version %d); "
                       "compare it with that version or a later one"
                     : "this is not a fitproof results document (format version %d); diff "
                       "needs two folders written by fitproof build",
                 version);
        free(path);
        return false;
    }
    r->spec_text = read_listed(r, r->manifest->spec_file, &r->spec_length, errors);
    if (!r->spec_text)
        return false;
    /* The data are optional: a folder moved without them still compares.
       The copy stored in the folder comes first. */
    char *data_path = path_join(dir, r->manifest->data_archived ? r->manifest->data_archived
                                                                : r->manifest->data_path);
    const char *why;
    r->data_text = file_read_all(data_path, &r->data_length, &why);
    free(data_path);
    if (r->data_text) {
        char digest[AUDIT_DIGEST_SIZE];
        audit_sha256(r->data_text, r->data_length, digest);
        if (strcmp(digest, r->manifest->data_sha256) != 0) {
            free(r->data_text);
            r->data_text = NULL;
        }
    }
    return true;
}

static void run_free(run *r)
{
    json_decref(r->results);
    audit_manifest_free(r->manifest);
    free(r->spec_text);
    free(r->data_text);
}

/* ---- lines, for rows and for the spec ------------------------------------ */

typedef struct {
    const char *text;
    size_t length;
    size_t number; /* 1-based line number in its file */
} line_span;

/* The lines of text (LF, CRLF or CR ends), blank ones included. Caller
   frees. */
static line_span *split_lines(const char *text, size_t length, size_t *count)
{
    line_span *lines = NULL;
    size_t n = 0, capacity = 0, number = 1;
    size_t start = 0;
    for (size_t i = 0; i <= length; i++) {
        bool end = i == length || text[i] == '\n' || text[i] == '\r';
        if (!end)
            continue;
        if (i < length || i > start) {
            xgrow((void **)&lines, &capacity, n + 1, sizeof *lines);
            lines[n++] = (line_span){text + start, i - start, number};
        }
        if (i + 1 < length && text[i] == '\r' && text[i + 1] == '\n')
            i++;
        start = i + 1;
        number++;
    }
    *count = n;
    return lines;
}

static bool same_line(const line_span *a, const line_span *b)
{
    return a->length == b->length && memcmp(a->text, b->text, a->length) == 0;
}

static int line_order(const void *pa, const void *pb)
{
    const line_span *a = pa, *b = pb;
    size_t shorter = a->length < b->length ? a->length : b->length;
    int byte_order = memcmp(a->text, b->text, shorter);
    if (byte_order != 0)
        return byte_order;
    return (a->length > b->length) - (a->length < b->length);
}

/* Drops blank lines (the data reader skips them too). */
static size_t keep_rows(line_span *lines, size_t n)
{
    size_t kept = 0;
    for (size_t i = 0; i < n; i++)
        if (lines[i].length > 0)
            lines[kept++] = lines[i];
    return kept;
}

/* Rows below identical headers, compared as multisets of lines. */
static void compare_rows(compare_result *c, const run *old_run, const run *new_run)
{
    if (!old_run->data_text || !new_run->data_text)
        return;
    size_t n_old, n_new;
    line_span *a = split_lines(old_run->data_text, old_run->data_length, &n_old);
    line_span *b = split_lines(new_run->data_text, new_run->data_length, &n_new);
    n_old = keep_rows(a, n_old);
    n_new = keep_rows(b, n_new);
    if (n_old > 0 && n_new > 0 && same_line(&a[0], &b[0])) {
        qsort(a + 1, n_old - 1, sizeof *a, line_order);
        qsort(b + 1, n_new - 1, sizeof *b, line_order);
        size_t i = 1, j = 1;
        while (i < n_old && j < n_new) {
            int order = line_order(&a[i], &b[j]);
            if (order == 0) {
                c->rows_common++;
                i++;
                j++;
            } else if (order < 0) {
                c->rows_only_old++;
                i++;
            } else {
                c->rows_only_new++;
                j++;
            }
        }
        c->rows_only_old += n_old - i;
        c->rows_only_new += n_new - j;
        c->rows_compared = true;
    }
    free(a);
    free(b);
}

static void add_spec_line(compare_result *c, size_t *capacity, char sign, const line_span *l)
{
    xgrow((void **)&c->spec_lines, capacity, c->n_spec_lines + 1, sizeof *c->spec_lines);
    c->spec_lines[c->n_spec_lines++] =
        (compare_spec_line){sign, l->number, xstrndup(l->text, l->length)};
}

/* Longest common subsequence of a[0..n) and b[0..m), then the edit walk. */
static void spec_edit_script(compare_result *c, const line_span *a, size_t n,
                             const line_span *b, size_t m)
{
    size_t capacity = 0;
    if ((n + 1) * (m + 1) > COMPARE_SPEC_CELLS_MAX) {
        c->spec_lines_elided = true;
        return;
    }
    uint32_t *length = xcalloc((n + 1) * (m + 1), sizeof *length);
#define LCS(i, j) length[(i) * (m + 1) + (j)]
    for (size_t i = n; i-- > 0;)
        for (size_t j = m; j-- > 0;)
            LCS(i, j) = same_line(&a[i], &b[j])
                            ? LCS(i + 1, j + 1) + 1
                            : (LCS(i + 1, j) > LCS(i, j + 1) ? LCS(i + 1, j) : LCS(i, j + 1));
    size_t i = 0, j = 0;
    while (i < n || j < m) {
        if (i < n && j < m && same_line(&a[i], &b[j])) {
            i++;
            j++;
        } else if (j == m || (i < n && LCS(i + 1, j) >= LCS(i, j + 1))) {
            add_spec_line(c, &capacity, '-', &a[i++]);
        } else {
            add_spec_line(c, &capacity, '+', &b[j++]);
        }
    }
#undef LCS
    free(length);
}

static void compare_specs(compare_result *c, const run *old_run, const run *new_run)
{
    c->same_spec = old_run->spec_length == new_run->spec_length &&
                   memcmp(old_run->spec_text, new_run->spec_text, old_run->spec_length) == 0;
    if (c->same_spec)
        return;
    size_t n, m;
    line_span *a = split_lines(old_run->spec_text, old_run->spec_length, &n);
    line_span *b = split_lines(new_run->spec_text, new_run->spec_length, &m);
    size_t head = 0;
    while (head < n && head < m && same_line(&a[head], &b[head]))
        head++;
    size_t tail = 0;
    while (tail < n - head && tail < m - head && same_line(&a[n - 1 - tail], &b[m - 1 - tail]))
        tail++;
    spec_edit_script(c, a + head, n - head - tail, b + head, m - head - tail);
    free(a);
    free(b);
}

/* ---- data, levels, checks -------------------------------------------------- */

static void read_data_side(compare_data_side *side, const run *r)
{
    const json_t *data = json_object_get(r->results, "data");
    side->path = xstrdup(r->manifest->data_path);
    memcpy(side->sha256, r->manifest->data_sha256, AUDIT_DIGEST_SIZE);
    side->rows_read = json_count(data, "rows_read");
    side->rows_kept = json_count(data, "rows_kept");
    side->readable = r->data_text != NULL;
}

static void add_level(compare_result *c, size_t *capacity, const char *column,
                      const json_t *level, compare_presence presence)
{
    xgrow((void **)&c->levels, capacity, c->n_levels + 1, sizeof *c->levels);
    c->levels[c->n_levels++] = (compare_level){xstrdup(column), json_text_copy(level, "level"),
                                               presence, json_count(level, "count")};
}

/* Levels of the category columns both runs have, in the new run's order. */
static void compare_levels(compare_result *c, const run *old_run, const run *new_run)
{
    const json_t *old_columns = json_object_get(json_object_get(old_run->results, "data"),
                                                "columns");
    const json_t *new_columns = json_object_get(json_object_get(new_run->results, "data"),
                                                "columns");
    size_t capacity = 0;
    for (size_t j = 0; j < json_array_size(new_columns); j++) {
        const json_t *now = json_array_get(new_columns, j);
        const char *name = json_text(now, "name");
        const json_t *before = name ? find_by(old_columns, "name", name) : NULL;
        const json_t *now_levels = json_object_get(now, "levels");
        const json_t *before_levels = json_object_get(before, "levels");
        if (!before || !json_is_array(now_levels) || !json_is_array(before_levels))
            continue;
        for (size_t k = 0; k < json_array_size(before_levels); k++) {
            const json_t *level = json_array_get(before_levels, k);
            const char *text = json_text(level, "level");
            if (text && !find_by(now_levels, "level", text))
                add_level(c, &capacity, name, level, COMPARE_ONLY_OLD);
        }
        for (size_t k = 0; k < json_array_size(now_levels); k++) {
            const json_t *level = json_array_get(now_levels, k);
            const char *text = json_text(level, "level");
            if (text && !find_by(before_levels, "level", text))
                add_level(c, &capacity, name, level, COMPARE_ONLY_NEW);
        }
    }
}

static bool check_passed(const json_t *check)
{
    return json_is_true(json_object_get(check, "passed"));
}

static void add_check(compare_result *c, size_t *capacity, const json_t *check,
                      compare_presence presence, bool old_passed, bool new_passed)
{
    xgrow((void **)&c->checks, capacity, c->n_checks + 1, sizeof *c->checks);
    c->checks[c->n_checks++] = (compare_check){json_text_copy(check, "name"),
                                               json_text_copy(check, "model"), presence,
                                               old_passed, new_passed};
}

/* Every check of either run, in the new run's order, then the old run's. */
static void compare_checks(compare_result *c, const run *old_run, const run *new_run)
{
    const json_t *before = json_object_get(old_run->results, "checks");
    const json_t *now = json_object_get(new_run->results, "checks");
    size_t capacity = 0;
    for (size_t k = 0; k < json_array_size(now); k++) {
        const json_t *check = json_array_get(now, k);
        const char *name = json_text(check, "name");
        const json_t *old_check = name ? find_by(before, "name", name) : NULL;
        add_check(c, &capacity, check, old_check ? COMPARE_BOTH : COMPARE_ONLY_NEW,
                  old_check && check_passed(old_check), check_passed(check));
    }
    for (size_t k = 0; k < json_array_size(before); k++) {
        const json_t *check = json_array_get(before, k);
        const char *name = json_text(check, "name");
        if (name && !find_by(now, "name", name))
            add_check(c, &capacity, check, COMPARE_ONLY_OLD, check_passed(check), false);
    }
}

/* ---- models ---------------------------------------------------------------- */

static bool read_estimate(const json_t *coefficient, compare_estimate *out)
{
    if (!coefficient || !json_is_true(json_object_get(coefficient, "estimable")))
        return false;
    *out = (compare_estimate){json_number(coefficient, "estimate"),
                              json_number(coefficient, "std_error"),
                              json_number(coefficient, "ci_low"),
                              json_number(coefficient, "ci_high"), json_number(coefficient, "p")};
    return isfinite(out->estimate);
}

static void add_coefficient(compare_model *model, size_t *capacity, const char *label,
                            const json_t *before, const json_t *now)
{
    xgrow((void **)&model->coefficients, capacity, model->n_coefficients + 1,
          sizeof *model->coefficients);
    compare_coefficient *k = &model->coefficients[model->n_coefficients++];
    memset(k, 0, sizeof *k);
    k->label = xstrdup(label);
    k->presence = before && now ? COMPARE_BOTH : before ? COMPARE_ONLY_OLD : COMPARE_ONLY_NEW;
    k->old_estimable = read_estimate(before, &k->old_value);
    k->new_estimable = read_estimate(now, &k->new_value);
    k->shift_in_se = NAN;
    if (k->old_estimable && k->new_estimable) {
        double spread = hypot(k->old_value.std_error, k->new_value.std_error);
        double change = k->new_value.estimate - k->old_value.estimate;
        k->shift_in_se = spread > 0 ? change / spread : (change == 0 ? 0 : copysign(INFINITY, change));
        k->moved = fabs(k->shift_in_se) > 1;
        k->sign_flipped = k->old_value.estimate * k->new_value.estimate < 0;
    }
}

static void compare_coefficients(compare_model *model, const json_t *before, const json_t *now)
{
    const json_t *old_list = json_object_get(before, "coefficients");
    const json_t *new_list = json_object_get(now, "coefficients");
    size_t capacity = 0;
    for (size_t k = 0; k < json_array_size(new_list); k++) {
        const json_t *coefficient = json_array_get(new_list, k);
        const char *label = json_text(coefficient, "label");
        if (label)
            add_coefficient(model, &capacity, label, find_by(old_list, "label", label),
                            coefficient);
    }
    for (size_t k = 0; k < json_array_size(old_list); k++) {
        const json_t *coefficient = json_array_get(old_list, k);
        const char *label = json_text(coefficient, "label");
        if (label && !find_by(new_list, "label", label))
            add_coefficient(model, &capacity, label, coefficient, NULL);
    }
}

static const json_t *verdicts_of(const json_t *model)
{
    return json_object_get(json_object_get(model, "diagnostics"), "verdicts");
}

/* A verdict code as the current results.json writes it: earlier versions
   wrote "holds" and "doubtful" for what is now worded without claiming
   that an assumption holds. */
static const char *current_verdict(const char *code)
{
    if (code && strcmp(code, "holds") == 0)
        return "no_departure_detected";
    if (code && strcmp(code, "doubtful") == 0)
        return "possible_departure";
    return code;
}

static void add_verdict(compare_model *model, size_t *capacity, const char *assumption,
                        const char *before, const char *now)
{
    before = current_verdict(before);
    now = current_verdict(now);
    if (before && now && strcmp(before, now) == 0)
        return;
    xgrow((void **)&model->verdicts, capacity, model->n_verdicts + 1, sizeof *model->verdicts);
    model->verdicts[model->n_verdicts++] = (compare_verdict){
        xstrdup(assumption), before ? xstrdup(before) : NULL, now ? xstrdup(now) : NULL};
}

static void compare_verdicts(compare_model *model, const json_t *before, const json_t *now)
{
    const json_t *old_list = verdicts_of(before), *new_list = verdicts_of(now);
    size_t capacity = 0;
    for (size_t k = 0; k < json_array_size(new_list); k++) {
        const json_t *verdict = json_array_get(new_list, k);
        const char *assumption = json_text(verdict, "assumption");
        if (assumption)
            add_verdict(model, &capacity, assumption,
                        json_text(find_by(old_list, "assumption", assumption), "verdict"),
                        json_text(verdict, "verdict"));
    }
    for (size_t k = 0; k < json_array_size(old_list); k++) {
        const json_t *verdict = json_array_get(old_list, k);
        const char *assumption = json_text(verdict, "assumption");
        if (assumption && !find_by(new_list, "assumption", assumption))
            add_verdict(model, &capacity, assumption, json_text(verdict, "verdict"), NULL);
    }
}

static void add_model(compare_result *c, size_t *capacity, const char *id, const json_t *before,
                      const json_t *now)
{
    xgrow((void **)&c->models, capacity, c->n_models + 1, sizeof *c->models);
    compare_model *model = &c->models[c->n_models++];
    memset(model, 0, sizeof *model);
    model->id = xstrdup(id);
    model->presence = before && now ? COMPARE_BOTH : before ? COMPARE_ONLY_OLD : COMPARE_ONLY_NEW;
    model->old_response = json_text_copy(before, "response");
    model->new_response = json_text_copy(now, "response");
    model->old_rows = json_count(before, "n_used");
    model->new_rows = json_count(now, "n_used");
    model->old_r_squared = json_number(json_object_get(before, "fit"), "r_squared");
    model->new_r_squared = json_number(json_object_get(now, "fit"), "r_squared");
    compare_coefficients(model, before, now);
    compare_verdicts(model, before, now);
}

static void compare_models(compare_result *c, const run *old_run, const run *new_run)
{
    const json_t *before = json_object_get(old_run->results, "models");
    const json_t *now = json_object_get(new_run->results, "models");
    size_t capacity = 0;
    for (size_t k = 0; k < json_array_size(now); k++) {
        const json_t *model = json_array_get(now, k);
        const char *id = json_text(model, "id");
        if (id)
            add_model(c, &capacity, id, find_by(before, "id", id), model);
    }
    for (size_t k = 0; k < json_array_size(before); k++) {
        const json_t *model = json_array_get(before, k);
        const char *id = json_text(model, "id");
        if (id && !find_by(now, "id", id))
            add_model(c, &capacity, id, model, NULL);
    }
}

/* ---- the whole comparison ------------------------------------------------ */

compare_result *compare_new(const char *old_dir, const char *new_dir, error_list *errors)
{
    run old_run, new_run;
    bool ok = run_load(&old_run, old_dir, errors);
    ok = run_load(&new_run, new_dir, errors) && ok;
    compare_result *c = NULL;
    if (ok) {
        c = xcalloc(1, sizeof *c);
        c->old_dir = xstrdup(old_dir);
        c->new_dir = xstrdup(new_dir);
        c->old_title = json_text_copy(old_run.results, "title");
        c->new_title = json_text_copy(new_run.results, "title");
        c->old_version = old_run.manifest->fitproof_version
                             ? xstrdup(old_run.manifest->fitproof_version)
                             : NULL;
        c->new_version = new_run.manifest->fitproof_version
                             ? xstrdup(new_run.manifest->fitproof_version)
                             : NULL;
        read_data_side(&c->old_data, &old_run);
        read_data_side(&c->new_data, &new_run);
        c->same_data = strcmp(c->old_data.sha256, c->new_data.sha256) == 0;
        compare_rows(c, &old_run, &new_run);
        compare_models(c, &old_run, &new_run);
        compare_checks(c, &old_run, &new_run);
        compare_levels(c, &old_run, &new_run);
        compare_specs(c, &old_run, &new_run);
    }
    run_free(&old_run);
    run_free(&new_run);
    return c;
}

bool compare_needs_attention(const compare_result *c)
{
    if (!c->same_spec || c->n_levels > 0)
        return true;
    for (size_t k = 0; k < c->n_checks; k++)
        if (c->checks[k].presence != COMPARE_BOTH ||
            c->checks[k].old_passed != c->checks[k].new_passed)
            return true;
    for (size_t m = 0; m < c->n_models; m++) {
        const compare_model *model = &c->models[m];
        if (model->presence != COMPARE_BOTH || model->n_verdicts > 0)
            return true;
        for (size_t k = 0; k < model->n_coefficients; k++) {
            const compare_coefficient *coefficient = &model->coefficients[k];
            if (coefficient->presence != COMPARE_BOTH || coefficient->moved ||
                coefficient->sign_flipped ||
                coefficient->old_estimable != coefficient->new_estimable)
                return true;
        }
    }
    return false;
}

void compare_free(compare_result *c)
{
    if (!c)
        return;
    for (size_t m = 0; m < c->n_models; m++) {
        compare_model *model = &c->models[m];
        for (size_t k = 0; k < model->n_coefficients; k++)
            free(model->coefficients[k].label);
        for (size_t k = 0; k < model->n_verdicts; k++) {
            free(model->verdicts[k].assumption);
            free(model->verdicts[k].old_verdict);
            free(model->verdicts[k].new_verdict);
        }
        free(model->coefficients);
        free(model->verdicts);
        free(model->id);
        free(model->old_response);
        free(model->new_response);
    }
    for (size_t k = 0; k < c->n_checks; k++) {
        free(c->checks[k].name);
        free(c->checks[k].model);
    }
    for (size_t k = 0; k < c->n_levels; k++) {
        free(c->levels[k].column);
        free(c->levels[k].level);
    }
    for (size_t k = 0; k < c->n_spec_lines; k++)
        free(c->spec_lines[k].text);
    free(c->models);
    free(c->checks);
    free(c->levels);
    free(c->spec_lines);
    free(c->old_data.path);
    free(c->new_data.path);
    free(c->old_dir);
    free(c->new_dir);
    free(c->old_title);
    free(c->new_title);
    free(c->old_version);
    free(c->new_version);
    free(c);
}
