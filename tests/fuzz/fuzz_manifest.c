/*
 * fuzz_manifest.c — libFuzzer target for the manifest reader verify and
 * the output stage trust (src/audit): any bytes as manifest.json. The
 * reader returns a manifest or records one error, never crashes; a
 * manifest it accepts has only safe file names, and writing it out and
 * reading it back gives the same entries. Run with `make fuzz`.
 */
#include <assert.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "../../src/audit/audit.h"

int LLVMFuzzerTestOneInput(const uint8_t *bytes, size_t size);

static void same_manifest(const audit_manifest *a, const audit_manifest *b)
{
    assert(strcmp(a->spec_file, b->spec_file) == 0);
    assert(strcmp(a->spec_sha256, b->spec_sha256) == 0);
    assert(strcmp(a->data_path, b->data_path) == 0);
    assert(strcmp(a->data_sha256, b->data_sha256) == 0);
    assert(!a->template_path == !b->template_path);
    assert(a->n_outputs == b->n_outputs);
    for (size_t i = 0; i < a->n_outputs; i++) {
        assert(strcmp(a->outputs[i].name, b->outputs[i].name) == 0);
        assert(strcmp(a->outputs[i].sha256, b->outputs[i].sha256) == 0);
        assert(a->outputs[i].bytes == b->outputs[i].bytes);
    }
}

int LLVMFuzzerTestOneInput(const uint8_t *bytes, size_t size)
{
    error_list errors;
    error_list_init(&errors);
    audit_manifest *m =
        audit_manifest_parse("f/manifest.json", (const char *)bytes, size, &errors);
    assert((m != NULL) == (errors.count == 0));
    if (m) {
        for (size_t i = 0; i < m->n_outputs; i++) {
            const char *name = m->outputs[i].name;
            size_t length = strlen(name);
            assert(length > 0 && name[0] != '/' && name[length - 1] != '/');
            assert(!strstr(name, "//") && strncmp(name, "../", 3) != 0 &&
                   strncmp(name, "./", 2) != 0 && !strstr(name, "/../") &&
                   !strstr(name, "/./") && strcmp(name, "..") != 0 &&
                   strcmp(name, ".") != 0);
            assert(length < 3 || strcmp(name + length - 3, "/..") != 0);
        }
        if (!m->fitproof_version)
            m->fitproof_version = xstrdup("0");
        char *text = audit_manifest_json(m);
        error_list again;
        error_list_init(&again);
        audit_manifest *back =
            audit_manifest_parse("f/manifest.json", text, strlen(text), &again);
        assert(back); /* what the writer writes, the reader reads */
        same_manifest(m, back);
        audit_manifest_free(back);
        error_list_free(&again);
        free(text);
    }
    audit_manifest_free(m);
    error_list_free(&errors);
    return 0;
}
