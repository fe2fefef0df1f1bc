/*
 * sign.c — `fitproof sign DIR --key KEY.pem [--signer NAME]`: signs a
 * report folder by writing a detached Ed25519 signature of its manifest
 * (DIR/manifest.sig), after checking that every file the manifest lists
 * is still as it was written; and the signature check `verify
 * --public-key` runs. The key never enters the folder.
 */
#define _XOPEN_SOURCE 700
#include "cli.h"

#include <limits.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static const char SIGN_HELP[] =
    "usage: fitproof sign DIR --key KEY.pem [--signer NAME]\n"
    "\n"
    "Signs the report folder DIR: writes DIR/manifest.sig, a detached Ed25519\n"
    "signature of DIR/manifest.json, which lists the SHA-256 of every file in\n"
    "the folder. The private key stays where it is; it may not be inside DIR.\n"
    "Check with 'fitproof verify DIR --public-key PUBLIC.pem'.\n"
    "\n"
    "  --key KEY.pem   an Ed25519 private key in PEM form, made with\n"
    "                  openssl genpkey -algorithm ed25519 -out KEY.pem\n"
    "  --signer NAME   the name to record as the signer (\"R. Okafor, QA\")\n"
    "\n"
    "Exit status: 0 signed; 2 usage error, a folder that is not a report or\n"
    "was changed after it was written, or a key that cannot be used.\n";

/* Whether path lies inside dir (both resolved, so links cannot hide it). */
static bool inside(const char *path, const char *dir)
{
    char real_path[PATH_MAX], real_dir[PATH_MAX];
    if (!realpath(path, real_path) || !realpath(dir, real_dir))
        return false;
    size_t n = strlen(real_dir);
    return strncmp(real_path, real_dir, n) == 0 && (real_path[n] == '/' || real_path[n] == '\0');
}

/* Every listed file present with its recorded digest; prints each that is
   not. */
static bool folder_intact(const char *dir, const audit_manifest *m)
{
    bool ok = true;
    for (size_t i = 0; i < m->n_outputs; i++) {
        char *path = path_join(dir, m->outputs[i].name);
        char digest[AUDIT_DIGEST_SIZE];
        const char *why;
        if (!audit_file_sha256(path, FILE_READ_MAX, digest, &why)) {
            fprintf(stderr, "%s: error: %s; the folder is not as fitproof wrote it\n", path, why);
            ok = false;
        } else if (strcmp(digest, m->outputs[i].sha256) != 0) {
            fprintf(stderr,
                    "%s: error: the file changed after the report was written; rebuild the "
                    "report (or find out what changed with 'fitproof verify %s') before "
                    "signing it\n",
                    path, dir);
            ok = false;
        }
        free(path);
    }
    return ok;
}

static int sign(const char *dir, const char *key_path, const char *signer)
{
    src_mark whole = {0, 0};
    error_list errors;
    error_list_init(&errors);
    int status = EXIT_USER_ERROR;
    audit_manifest *m = audit_manifest_read(dir, &errors);
    char *manifest_path = path_join(dir, "manifest.json");
    if (m && inside(key_path, dir)) {
        error_at(&errors, key_path, whole,
                 "the private key is inside the report folder, where it would be filed and "
                 "passed on with the report; keep it elsewhere");
    } else if (m && folder_intact(dir, m)) {
        size_t length;
        const char *why;
        char *manifest = file_read_all(manifest_path, &length, &why);
        char *signature = manifest ? audit_sign(manifest, length, key_path, signer, &why) : NULL;
        if (!manifest) {
            error_at(&errors, manifest_path, whole, "cannot read it: %s", why);
        } else if (!signature) {
            error_at(&errors, key_path, whole, "%s", why);
        } else {
            char *target = path_join(dir, AUDIT_SIGNATURE_FILE);
            status = output_write_file(target, signature, strlen(signature), &errors);
            if (status == EXIT_OK)
                printf("fitproof: signed %s (Ed25519%s%s); check with 'fitproof verify %s "
                       "--public-key PUBLIC.pem'\n",
                       manifest_path, signer ? ", signer " : "", signer ? signer : "", dir);
            free(target);
        }
        free(signature);
        free(manifest);
    }
    error_list_print(&errors);
    error_list_free(&errors);
    free(manifest_path);
    audit_manifest_free(m);
    return status;
}

int command_sign(int argc, char **argv)
{
    const char *dir = NULL, *key = NULL, *signer = NULL;
    for (int i = 2; i < argc; i++) {
        if (strcmp(argv[i], "--help") == 0 || strcmp(argv[i], "-h") == 0) {
            fputs(SIGN_HELP, stdout);
            return EXIT_OK;
        }
        if (strcmp(argv[i], "--key") == 0 || strcmp(argv[i], "--signer") == 0) {
            if (i + 1 >= argc)
                return cli_usage_error(strcmp(argv[i], "--key") == 0
                                           ? "--key needs a private key file"
                                           : "--signer needs a name");
            *(strcmp(argv[i], "--key") == 0 ? &key : &signer) = argv[i + 1];
            i++;
        } else if (argv[i][0] == '-') {
            fprintf(stderr, "fitproof: error: unknown option '%s'; see 'fitproof sign --help'\n",
                    argv[i]);
            return EXIT_USER_ERROR;
        } else if (!dir) {
            dir = argv[i];
        } else {
            return cli_usage_error("sign takes one report folder");
        }
    }
    if (!dir || !key)
        return cli_usage_error("sign needs a report folder and a key, as in 'fitproof sign "
                               "cylinders-report --key lab-key.pem'");
    return sign(dir, key, signer);
}

bool verify_signature(const char *dir, const char *public_key_path)
{
    char *manifest_path = path_join(dir, "manifest.json");
    char *signature_path = path_join(dir, AUDIT_SIGNATURE_FILE);
    size_t manifest_length, signature_length;
    const char *why = "";
    char *manifest = file_read_all(manifest_path, &manifest_length, &why);
    char *signature = manifest ? file_read_all(signature_path, &signature_length, &why) : NULL;
    bool good = false;
    if (!manifest || !signature) {
        printf("  signature: %s is missing (%s): the folder is not signed\n",
               manifest ? AUDIT_SIGNATURE_FILE : "manifest.json", why);
    } else {
        audit_signature_facts facts;
        audit_signature_status status =
            audit_check_signature(manifest, manifest_length, signature, signature_length,
                                  public_key_path, &facts, &why);
        good = status == AUDIT_SIGNATURE_GOOD;
        if (good) {
            printf("  signature: good; manifest.json was signed with the key whose SHA-256 is "
                   "%s\n",
                   facts.key_sha256);
            if (facts.certificate_subject)
                printf("  signed by: %s (the certificate's subject)\n",
                       facts.certificate_subject);
            if (facts.claimed_signer)
                printf("  signer named at signing: %s\n", facts.claimed_signer);
        } else if (status == AUDIT_SIGNATURE_BAD) {
            printf("  signature: BAD; manifest.json is not what this key signed (the manifest "
                   "changed after signing, or another key signed it)\n");
        } else {
            printf("  signature: cannot be checked: %s (%s)\n", why,
                   status == AUDIT_SIGNATURE_NO_KEY ? public_key_path : AUDIT_SIGNATURE_FILE);
        }
        audit_signature_facts_free(&facts);
    }
    free(manifest);
    free(signature);
    free(manifest_path);
    free(signature_path);
    return good;
}
