/*
 * sign.c — detached Ed25519 signatures of a report folder's manifest
 * (RFC 8032, through OpenSSL's EVP interface). The manifest holds the
 * SHA-256 of every file of the folder, so signing its bytes signs the
 * folder: a changed file breaks its digest, a changed manifest breaks the
 * signature. Ed25519 signatures are deterministic, so signing the same
 * manifest with the same key gives the same bytes, and no clock is read.
 *
 * The signature file ("fitproof.signature/1", docs/results.md) names the
 * signed file, its SHA-256, the SHA-256 of the public key (DER
 * SubjectPublicKeyInfo) as a fingerprint, the signer's name when one was
 * given, and the signature in base64.
 */
#include "audit.h"

#include <jansson.h>
#include <openssl/evp.h>
#include <openssl/pem.h>
#include <openssl/x509.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define SIGNATURE_FORMAT "fitproof.signature/1"
#define ED25519_SIGNATURE_BYTES 64

/* The SHA-256 of the key's DER SubjectPublicKeyInfo. */
static void key_fingerprint(EVP_PKEY *key, char out[AUDIT_DIGEST_SIZE])
{
    unsigned char *der = NULL;
    int length = i2d_PUBKEY(key, &der);
    audit_sha256(der, length > 0 ? (size_t)length : 0, out);
    OPENSSL_free(der);
}

static EVP_PKEY *read_private_key(const char *path, const char **why)
{
    FILE *f = fopen(path, "r");
    if (!f) {
        *why = "cannot open the key file";
        return NULL;
    }
    EVP_PKEY *key = PEM_read_PrivateKey(f, NULL, NULL, NULL);
    fclose(f);
    if (!key)
        *why = "the file holds no PEM private key (or it is encrypted)";
    else if (EVP_PKEY_get_id(key) != EVP_PKEY_ED25519) {
        *why = "the key is not an Ed25519 key; make one with 'openssl genpkey -algorithm "
               "ed25519'";
        EVP_PKEY_free(key);
        key = NULL;
    }
    return key;
}

/* A PEM public key, or the key of a PEM X.509 certificate (whose subject
   then names the signer: *subject, caller frees). */
static EVP_PKEY *read_public_key(const char *path, char **subject, const char **why)
{
    *subject = NULL;
    FILE *f = fopen(path, "r");
    if (!f) {
        *why = "cannot open the key file";
        return NULL;
    }
    EVP_PKEY *key = PEM_read_PUBKEY(f, NULL, NULL, NULL);
    if (!key) {
        rewind(f);
        X509 *certificate = PEM_read_X509(f, NULL, NULL, NULL);
        if (certificate) {
            key = X509_get_pubkey(certificate);
            char *name = X509_NAME_oneline(X509_get_subject_name(certificate), NULL, 0);
            *subject = name ? xstrdup(name) : NULL;
            OPENSSL_free(name);
            X509_free(certificate);
        }
    }
    fclose(f);
    if (!key)
        *why = "the file holds no PEM public key or certificate";
    else if (EVP_PKEY_get_id(key) != EVP_PKEY_ED25519) {
        *why = "the key is not an Ed25519 key";
        EVP_PKEY_free(key);
        key = NULL;
        free(*subject);
        *subject = NULL;
    }
    return key;
}

char *audit_sign(const char *manifest, size_t length, const char *key_path,
                 const char *signer, const char **why)
{
    EVP_PKEY *key = read_private_key(key_path, why);
    if (!key)
        return NULL;
    unsigned char signature[ED25519_SIGNATURE_BYTES];
    size_t signature_length = sizeof signature;
    EVP_MD_CTX *context = EVP_MD_CTX_new();
    bool ok = EVP_DigestSignInit(context, NULL, NULL, NULL, key) == 1 &&
              EVP_DigestSign(context, signature, &signature_length,
                             (const unsigned char *)manifest, length) == 1;
    EVP_MD_CTX_free(context);
    char *text = NULL;
    if (!ok) {
        *why = "OpenSSL could not sign with this key";
    } else {
        char encoded[4 * ((ED25519_SIGNATURE_BYTES + 2) / 3) + 1];
        EVP_EncodeBlock((unsigned char *)encoded, signature, (int)signature_length);
        char manifest_digest[AUDIT_DIGEST_SIZE], fingerprint[AUDIT_DIGEST_SIZE];
        audit_sha256(manifest, length, manifest_digest);
        key_fingerprint(key, fingerprint);
        json_t *root = json_pack("{s:s,s:s,s:s,s:s,s:s,s:o,s:s}", "format", SIGNATURE_FORMAT,
                                 "algorithm", "Ed25519", "signed_file", "manifest.json",
                                 "signed_sha256", manifest_digest, "public_key_sha256",
                                 fingerprint, "signer", signer ? json_string(signer) : json_null(),
                                 "signature", encoded);
        char *dumped = json_dumps(root, JSON_INDENT(2));
        json_decref(root);
        buf out;
        buf_init(&out);
        buf_puts(&out, dumped);
        buf_putc(&out, '\n');
        free(dumped);
        text = buf_detach(&out);
    }
    EVP_PKEY_free(key);
    return text;
}

static bool decode_signature(const char *encoded, unsigned char out[ED25519_SIGNATURE_BYTES])
{
    size_t length = strlen(encoded);
    if (length != 4 * ((ED25519_SIGNATURE_BYTES + 2) / 3))
        return false;
    unsigned char decoded[4 * ((ED25519_SIGNATURE_BYTES + 2) / 3)];
    int got = EVP_DecodeBlock(decoded, (const unsigned char *)encoded, (int)length);
    /* 64 bytes encode to 88 characters with two '=' of padding. */
    if (got != ED25519_SIGNATURE_BYTES + 2 || encoded[length - 1] != '=' ||
        encoded[length - 2] != '=')
        return false;
    memcpy(out, decoded, ED25519_SIGNATURE_BYTES);
    return true;
}

audit_signature_status audit_check_signature(const char *manifest, size_t length,
                                             const char *signature_text, size_t signature_length,
                                             const char *public_key_path,
                                             audit_signature_facts *facts, const char **why)
{
    memset(facts, 0, sizeof *facts);
    json_error_t error;
    json_t *root = json_loadb(signature_text, signature_length, 0, &error);
    const char *format = json_string_value(json_object_get(root, "format"));
    const char *encoded = json_string_value(json_object_get(root, "signature"));
    unsigned char signature[ED25519_SIGNATURE_BYTES];
    if (!format || strcmp(format, SIGNATURE_FORMAT) != 0 || !encoded ||
        !decode_signature(encoded, signature)) {
        json_decref(root);
        *why = "the signature file is damaged or not a fitproof signature";
        return AUDIT_SIGNATURE_UNREADABLE;
    }
    const char *signer = json_string_value(json_object_get(root, "signer"));
    facts->claimed_signer = signer ? xstrdup(signer) : NULL;
    json_decref(root);
    EVP_PKEY *key = read_public_key(public_key_path, &facts->certificate_subject, why);
    if (!key)
        return AUDIT_SIGNATURE_NO_KEY;
    key_fingerprint(key, facts->key_sha256);
    EVP_MD_CTX *context = EVP_MD_CTX_new();
    bool good = EVP_DigestVerifyInit(context, NULL, NULL, NULL, key) == 1 &&
                EVP_DigestVerify(context, signature, sizeof signature,
                                 (const unsigned char *)manifest, length) == 1;
    EVP_MD_CTX_free(context);
    EVP_PKEY_free(key);
    return good ? AUDIT_SIGNATURE_GOOD : AUDIT_SIGNATURE_BAD;
}

void audit_signature_facts_free(audit_signature_facts *facts)
{
    free(facts->claimed_signer);
    free(facts->certificate_subject);
    memset(facts, 0, sizeof *facts);
}
