/*
 * audit.c — digests (OpenSSL's EVP SHA-256) and the manifest (jansson).
 * The manifest holds no time stamp and no absolute path, so that the same
 * inputs built into the same place give the same bytes.
 */
#include "audit.h"

#include <cmark.h>
#include <gsl/gsl_version.h>
#include <jansson.h>
#include <openssl/evp.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <yaml.h>

static void hex_digest(const unsigned char *digest, unsigned length,
                       char out[AUDIT_DIGEST_SIZE])
{
    static const char hex[] = "0123456789abcdef";
    for (unsigned i = 0; i < length && i < 32; i++) {
        out[2 * i] = hex[digest[i] >> 4];
        out[2 * i + 1] = hex[digest[i] & 15];
    }
    out[64] = '\0';
}

void audit_sha256(const void *bytes, size_t length, char out[AUDIT_DIGEST_SIZE])
{
    unsigned char digest[EVP_MAX_MD_SIZE];
    unsigned digest_length = 0;
    EVP_Digest(bytes, length, digest, &digest_length, EVP_sha256(), NULL);
    hex_digest(digest, digest_length, out);
}

audit_manifest *audit_manifest_new(void)
{
    return xcalloc(1, sizeof(audit_manifest));
}

void audit_manifest_free(audit_manifest *m)
{
    if (!m)
        return;
    for (size_t i = 0; i < m->n_outputs; i++)
        free(m->outputs[i].name);
    free(m->outputs);
    free(m->spec_file);
    free(m->spec_folder);
    free(m->data_path);
    free(m->data_source);
    free(m->data_query);
    free(m->data_server);
    free(m->data_sheet);
    free(m->data_archived);
    for (size_t i = 0; i < m->n_data_kinds; i++)
        free(m->data_kinds[i]);
    free(m->data_kinds);
    free(m->template_path);
    free(m->fitproof_version);
    for (size_t i = 0; i < m->n_libraries; i++) {
        free(m->library_names[i]);
        free(m->library_versions[i]);
    }
    free(m->library_names);
    free(m->library_versions);
    free(m->report_date);
    free(m->report_date_source);
    free(m);
}

const audit_entry *audit_manifest_find(const audit_manifest *m, const char *name)
{
    for (size_t i = 0; i < m->n_outputs; i++)
        if (strcmp(m->outputs[i].name, name) == 0)
            return &m->outputs[i];
    return NULL;
}

bool audit_file_sha256(const char *path, size_t max_bytes, char out[AUDIT_DIGEST_SIZE],
                       const char **why)
{
    size_t length;
    char *bytes = file_read_limited(path, max_bytes, &length, why);
    if (!bytes)
        return false;
    audit_sha256(bytes, length, out);
    free(bytes);
    return true;
}

void audit_manifest_add(audit_manifest *m, const char *name, const char *bytes, size_t length)
{
    m->outputs = xrealloc(m->outputs, (m->n_outputs + 1) * sizeof(audit_entry));
    audit_entry *entry = &m->outputs[m->n_outputs++];
    entry->name = xstrdup(name);
    entry->bytes = length;
    audit_sha256(bytes, length, entry->sha256);
}

const char *audit_gsl_version(void)
{
    return gsl_version;
}

static json_t *file_entry(const char *key, const char *value, const char *sha256)
{
    json_t *entry = json_object();
    json_object_set_new(entry, key, json_string(value ? value : ""));
    json_object_set_new(entry, "sha256", json_string(sha256));
    return entry;
}

char *audit_manifest_json(const audit_manifest *m)
{
    json_t *root = json_object();
    json_object_set_new(root, "format", json_string("fitproof.manifest/1"));
    json_object_set_new(root, "fitproof_version", json_string(m->fitproof_version));
    json_t *libraries = json_object();
    json_object_set_new(libraries, "gsl", json_string(gsl_version));
    json_object_set_new(libraries, "libyaml", json_string(yaml_get_version_string()));
    json_object_set_new(libraries, "jansson", json_string(JANSSON_VERSION));
    json_object_set_new(libraries, "cmark", json_string(cmark_version_string()));
    json_object_set_new(libraries, "openssl", json_string(OpenSSL_version(OPENSSL_VERSION)));
    json_object_set_new(root, "libraries", libraries);
    json_t *spec = file_entry("file", m->spec_file, m->spec_sha256);
    json_object_set_new(spec, "folder", json_string(m->spec_folder ? m->spec_folder : "."));
    json_object_set_new(root, "spec", spec);
    json_t *data = file_entry("path", m->data_path, m->data_sha256);
    if (m->data_source)
        json_object_set_new(data, "source", json_string(m->data_source));
    if (m->data_query) {
        json_object_set_new(data, "query", json_string(m->data_query));
        json_object_set_new(data, "server", json_string(m->data_server ? m->data_server : ""));
    }
    if (m->data_sheet)
        json_object_set_new(data, "sheet", json_string(m->data_sheet));
    if (m->data_archived)
        json_object_set_new(data, "archived", json_string(m->data_archived));
    if (m->data_kinds) {
        json_t *kinds = json_array();
        for (size_t i = 0; i < m->n_data_kinds; i++)
            json_array_append_new(kinds, json_string(m->data_kinds[i]));
        json_object_set_new(data, "archived_kinds", kinds);
    }
    json_object_set_new(root, "data", data);
    if (m->template_path)
        json_object_set_new(root, "template",
                            file_entry("path", m->template_path, m->template_sha256));
    /* The date a rebuild must use to give the same bytes. */
    if (m->report_date)
        json_object_set_new(root, "report_date",
                            json_pack("{s:s,s:s}", "date", m->report_date, "source",
                                      m->report_date_source ? m->report_date_source : ""));
    json_t *outputs = json_array();
    for (size_t i = 0; i < m->n_outputs; i++) {
        json_t *entry = file_entry("file", m->outputs[i].name, m->outputs[i].sha256);
        json_object_set_new(entry, "bytes", json_integer((json_int_t)m->outputs[i].bytes));
        json_array_append_new(outputs, entry);
    }
    json_object_set_new(root, "outputs", outputs);
    char *text = json_dumps(root, JSON_INDENT(2));
    json_decref(root);
    buf out;
    buf_init(&out);
    buf_puts(&out, text);
    buf_putc(&out, '\n');
    free(text);
    return buf_detach(&out);
}

/* Copies a 64-digit lower-case hexadecimal digest out of object, or fails. */
static bool read_digest(json_t *object, char out[AUDIT_DIGEST_SIZE])
{
    const char *text = json_string_value(json_object_get(object, "sha256"));
    if (!text || strlen(text) != 64)
        return false;
    for (size_t i = 0; i < 64; i++)
        if (!((text[i] >= '0' && text[i] <= '9') || (text[i] >= 'a' && text[i] <= 'f')))
            return false;
    memcpy(out, text, AUDIT_DIGEST_SIZE);
    return true;
}

static char *read_string(json_t *object, const char *key)
{
    const char *text = json_string_value(json_object_get(object, key));
    return text ? xstrdup(text) : NULL;
}

/* data.archived_kinds: absent, or an array of kind words. */
static bool read_kinds(json_t *kinds, audit_manifest *m)
{
    if (!kinds)
        return true;
    if (!json_is_array(kinds))
        return false;
    size_t n = json_array_size(kinds);
    m->data_kinds = xcalloc(n ? n : 1, sizeof(char *));
    for (size_t i = 0; i < n; i++) {
        const char *kind = json_string_value(json_array_get(kinds, i));
        if (!kind || (*kind && strcmp(kind, "numeric") != 0 && strcmp(kind, "category") != 0 &&
                      strcmp(kind, "date") != 0))
            return false;
        m->data_kinds[m->n_data_kinds++] = xstrdup(kind);
    }
    return true;
}

/* A report file name: relative, inside the folder, no empty, "." or ".."
   component, at most one subfolder (as output_add allows). */
static bool safe_output_name(const char *name)
{
    if (!*name || name[0] == '/' || strlen(name) > 4096)
        return false;
    int slashes = 0;
    for (const char *part = name; *part;) {
        const char *end = strchr(part, '/');
        size_t length = end ? (size_t)(end - part) : strlen(part);
        if (length == 0 || (length == 1 && part[0] == '.') ||
            (length == 2 && part[0] == '.' && part[1] == '.'))
            return false;
        if (!end)
            break;
        slashes++;
        part = end + 1;
        if (!*part)
            return false;
    }
    return slashes <= 1;
}

static bool read_outputs(json_t *outputs, audit_manifest *m)
{
    if (!json_is_array(outputs))
        return false;
    for (size_t i = 0; i < json_array_size(outputs); i++) {
        json_t *entry = json_array_get(outputs, i);
        const char *name = json_string_value(json_object_get(entry, "file"));
        json_t *bytes = json_object_get(entry, "bytes");
        if (!name || !safe_output_name(name) || !json_is_integer(bytes) ||
            json_integer_value(bytes) < 0)
            return false;
        if (audit_manifest_find(m, name))
            return false; /* listed twice */
        m->outputs = xrealloc(m->outputs, (m->n_outputs + 1) * sizeof(audit_entry));
        audit_entry *out = &m->outputs[m->n_outputs++];
        out->name = xstrdup(name);
        out->bytes = (size_t)json_integer_value(bytes);
        if (!read_digest(entry, out->sha256))
            return false;
    }
    return true;
}

audit_manifest *audit_manifest_parse(const char *path, const char *text, size_t length,
                                     error_list *errors)
{
    json_error_t error;
    /* JSON_REJECT_DUPLICATES: two values for one key would let a reader
       and a writer disagree on what the manifest says. */
    json_t *root = json_loadb(text, length, JSON_REJECT_DUPLICATES, &error);
    src_mark whole = {0, 0};
    audit_manifest *m = NULL;
    const char *format = json_string_value(json_object_get(root, "format"));
    if (!root) {
        error_at(errors, path, whole,
                 "cannot read the manifest (%s); verify needs a folder written by fitproof "
                 "build",
                 error.text);
    } else if (!format || strcmp(format, "fitproof.manifest/1") != 0) {
        error_at(errors, path, whole, "this is not a fitproof manifest (format "
                                      "fitproof.manifest/1 expected)");
    } else {
        m = audit_manifest_new();
        json_t *spec = json_object_get(root, "spec"), *data = json_object_get(root, "data");
        m->spec_file = read_string(spec, "file");
        m->spec_folder = read_string(spec, "folder");
        m->data_path = read_string(data, "path");
        m->data_archived = read_string(data, "archived");
        m->data_source = read_string(data, "source");
        m->data_query = read_string(data, "query");
        m->data_server = read_string(data, "server");
        bool kinds_ok = read_kinds(json_object_get(data, "archived_kinds"), m);
        m->fitproof_version = read_string(root, "fitproof_version");
        json_t *libraries = json_object_get(root, "libraries");
        const char *library;
        json_t *version;
        size_t n_libraries = json_is_object(libraries) ? json_object_size(libraries) : 0;
        m->library_names = xcalloc(n_libraries ? n_libraries : 1, sizeof(char *));
        m->library_versions = xcalloc(n_libraries ? n_libraries : 1, sizeof(char *));
        json_object_foreach(libraries, library, version) {
            if (!json_is_string(version) || m->n_libraries == n_libraries)
                continue;
            m->library_names[m->n_libraries] = xstrdup(library);
            m->library_versions[m->n_libraries++] = xstrdup(json_string_value(version));
        }
        json_t *date = json_object_get(root, "report_date");
        m->report_date = read_string(date, "date");
        m->report_date_source = read_string(date, "source");
        bool ok = m->spec_file && safe_output_name(m->spec_file) && !strchr(m->spec_file, '/') &&
                  (!m->data_archived || safe_output_name(m->data_archived)) && kinds_ok &&
                  m->data_path && *m->data_path && read_digest(spec, m->spec_sha256) &&
                  read_digest(data, m->data_sha256);
        json_t *page = json_object_get(root, "template");
        if (ok && page) {
            m->template_path = read_string(page, "path");
            ok = m->template_path && *m->template_path &&
                 read_digest(page, m->template_sha256);
        }
        ok = ok && read_outputs(json_object_get(root, "outputs"), m);
        if (!ok) {
            error_at(errors, path, whole, "the manifest is damaged (a file name or digest is "
                                          "missing or malformed); rebuild the report");
            audit_manifest_free(m);
            m = NULL;
        }
    }
    json_decref(root);
    return m;
}

audit_manifest *audit_manifest_read(const char *dir, error_list *errors)
{
    char *path = path_join(dir, "manifest.json");
    size_t length;
    const char *why;
    char *text = file_read_limited(path, AUDIT_MANIFEST_MAX, &length, &why);
    audit_manifest *m = NULL;
    if (!text) {
        src_mark whole = {0, 0};
        error_at(errors, path, whole,
                 "cannot read the manifest (%s); verify needs a folder written by fitproof "
                 "build",
                 why);
    } else {
        m = audit_manifest_parse(path, text, length, errors);
    }
    free(text);
    free(path);
    return m;
}
