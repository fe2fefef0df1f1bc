/*
 * audit.h — the audit trail: SHA-256 digests, the manifest written beside
 * every report (digests of the spec, the data and each output file, and the
 * versions of fitproof and its libraries), and reading it back for
 * `fitproof verify`.
 */
#ifndef FITPROOF_AUDIT_H
#define FITPROOF_AUDIT_H

#include "../util/util.h"

#define AUDIT_DIGEST_SIZE 65 /* 64 hexadecimal digits and a NUL */

/* Lower-case hexadecimal SHA-256 of bytes. */
void audit_sha256(const void *bytes, size_t length, char out[AUDIT_DIGEST_SIZE]);

typedef struct {
    char *name;   /* relative to the report folder */
    char sha256[AUDIT_DIGEST_SIZE];
    size_t bytes;
} audit_entry;

typedef struct {
    char *spec_file;   /* the archived copy, relative to the report folder */
    char *spec_folder; /* where the spec was, relative to the report folder:
                          its data and template paths are relative to it */
    char spec_sha256[AUDIT_DIGEST_SIZE];
    char *data_path;   /* the data file, relative to the report folder (a SQLite
                          file too; a PostgreSQL source: its connection string) */
    char data_sha256[AUDIT_DIGEST_SIZE]; /* a SQL source: of its rows in the
                                            canonical text form */
    char *data_source; /* "sqlite", "postgres" or "xlsx"; NULL for a text file */
    char *data_query;  /* a SQL source: the query run */
    char *data_server; /* a SQL source: the database's version */
    char *data_sheet;  /* a spreadsheet: the sheet read */
    char *data_archived; /* the copy of the data file stored in the folder
                            (report.archive_data), relative to it; or NULL.
                            A SQL source: its rows in the canonical text form */
    char **data_kinds;   /* a SQL source's stored rows: per column, the kind
                            its database type implied ("numeric", "category",
                            "date", "" for none) */
    size_t n_data_kinds;
    char *template_path; /* the spec's own page template, relative to the report
                            folder; NULL when the built-in one was used */
    char template_sha256[AUDIT_DIGEST_SIZE];
    char *fitproof_version;
    char **library_names;     /* the libraries recorded at the build, in order */
    char **library_versions;
    size_t n_libraries;
    char *report_date;        /* YYYY-MM-DD, or NULL when the report has no date */
    char *report_date_source; /* "meta.date", "--date" or "SOURCE_DATE_EPOCH" */
    audit_entry *outputs;
    size_t n_outputs;
} audit_manifest;

audit_manifest *audit_manifest_new(void);
void audit_manifest_free(audit_manifest *m);
/* Records an output file and its digest. */
void audit_manifest_add(audit_manifest *m, const char *name, const char *bytes, size_t length);
/* The entry of the listed file name, or NULL (borrowed). */
const audit_entry *audit_manifest_find(const audit_manifest *m, const char *name);
/* SHA-256 of the file at path (at most max_bytes, read as a regular file);
   false with *why set (static text) when it cannot be read. */
bool audit_file_sha256(const char *path, size_t max_bytes, char out[AUDIT_DIGEST_SIZE],
                       const char **why);
/* The manifest as JSON ("fitproof.manifest/1"), with the library versions
   this binary was built with. Caller frees. */
char *audit_manifest_json(const audit_manifest *m);
/* Reads DIR/manifest.json (a regular file of at most AUDIT_MANIFEST_MAX
   bytes). Returns NULL after recording an error. */
audit_manifest *audit_manifest_read(const char *dir, error_list *errors);
/* Parses manifest text (path names it in messages). Refuses, as damaged,
   a manifest whose file names are empty, absolute, reach outside the
   folder (".." or "."), repeat, or whose digests are not 64 lower-case
   hexadecimal digits. Returns NULL after recording an error. */
audit_manifest *audit_manifest_parse(const char *path, const char *text, size_t length,
                                     error_list *errors);
#define AUDIT_MANIFEST_MAX ((size_t)16 << 20)

/* ---- signatures (sign.c) -------------------------------------------------- */

/* The file beside manifest.json that holds its detached signature. It is
   the one file of a report folder that the manifest does not list. */
#define AUDIT_SIGNATURE_FILE "manifest.sig"

/* The signature file for the bytes of a manifest, signed with the Ed25519
   private key in the PEM file key_path, naming signer when not NULL.
   Returns NULL with *why set when the key cannot be used. Caller frees. */
char *audit_sign(const char *manifest, size_t length, const char *key_path,
                 const char *signer, const char **why);

typedef enum {
    AUDIT_SIGNATURE_GOOD,       /* the key signed exactly these manifest bytes */
    AUDIT_SIGNATURE_BAD,        /* the manifest changed, or another key signed it */
    AUDIT_SIGNATURE_UNREADABLE, /* the signature file is damaged */
    AUDIT_SIGNATURE_NO_KEY      /* the public key file cannot be used */
} audit_signature_status;

typedef struct {
    char *claimed_signer;      /* the name the signature file gives, or NULL */
    char *certificate_subject; /* the subject of the certificate given as key, or NULL */
    char key_sha256[AUDIT_DIGEST_SIZE]; /* fingerprint of the public key used */
} audit_signature_facts;

/* Checks a signature file against the manifest bytes with the public key
   (a PEM public key or X.509 certificate) in public_key_path. Fills facts
   (free with audit_signature_facts_free); *why explains the last two
   statuses. */
audit_signature_status audit_check_signature(const char *manifest, size_t length,
                                             const char *signature_text, size_t signature_length,
                                             const char *public_key_path,
                                             audit_signature_facts *facts, const char **why);
void audit_signature_facts_free(audit_signature_facts *facts);

/* The GSL version this binary runs with. */
const char *audit_gsl_version(void);

#endif
