/*
 * file.c — the data file's bytes, read once into a private copy (see
 * data_file_open for why not a mapping); page advice for the large arrays
 * built from them; and the SHA-256 (FIPS 180-4) of the copy through
 * OpenSSL's EVP interface, for the spec's pin and the report's provenance.
 */
#define _DEFAULT_SOURCE /* madvise */

#include <errno.h>
#include <fcntl.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <sys/mman.h>
#include <sys/stat.h>
#include <unistd.h>

#include <openssl/evp.h>

#include "internal.h"

bool data_file_open(const char *path, data_file *f, const char **why)
{
    memset(f, 0, sizeof *f);
    size_t length;
    f->copy = file_read_limited(path, DATA_FILE_MAX, &length, why);
    if (!f->copy)
        return false;
    f->bytes = f->copy;
    f->length = length;
    return true;
}

void data_file_close(data_file *f)
{
    /* The heap keeps freed arrays (src/cli/main.c); the file's pages go
       back now, so that the arrays of the later stages do not sit on top
       of a whole file's worth of resident memory. */
    if (f->copy)
        data_drop_pages(f->copy, f->length);
    free(f->copy);
    memset(f, 0, sizeof *f);
}

void data_drop_pages(void *bytes, size_t length)
{
    size_t page = (size_t)sysconf(_SC_PAGESIZE);
    uintptr_t start = ((uintptr_t)bytes + page - 1) / page * page;
    uintptr_t stop = ((uintptr_t)bytes + length) / page * page;
    if (stop > start)
        madvise((void *)start, stop - start, MADV_DONTNEED);
}

void data_advise_huge(void *bytes, size_t length)
{
#ifdef MADV_HUGEPAGE
    const uintptr_t huge = (uintptr_t)2 << 20;
    uintptr_t start = ((uintptr_t)bytes + huge - 1) & ~(huge - 1);
    uintptr_t stop = ((uintptr_t)bytes + length) & ~(huge - 1);
    if (length >= 4 * huge && stop > start)
        madvise((void *)start, stop - start, MADV_HUGEPAGE);
#else
    (void)bytes;
    (void)length;
#endif
}

void data_sha256_hex(const char *bytes, size_t length, char out[65])
{
    unsigned char digest[EVP_MAX_MD_SIZE];
    unsigned int digest_length = 0;
    EVP_MD_CTX *context = EVP_MD_CTX_new();
    if (!context || !EVP_DigestInit_ex(context, EVP_sha256(), NULL) ||
        !EVP_DigestUpdate(context, bytes, length) ||
        !EVP_DigestFinal_ex(context, digest, &digest_length) || digest_length != 32)
        abort();
    EVP_MD_CTX_free(context);
    static const char hex[] = "0123456789abcdef";
    for (unsigned i = 0; i < 32; i++) {
        out[2 * i] = hex[digest[i] >> 4];
        out[2 * i + 1] = hex[digest[i] & 15];
    }
    out[64] = '\0';
}
