/*
 * file.c — the data file's bytes: mapped read-only (no copy), with pages
 * handed back behind the reader so that a file of any size adds little to
 * the resident memory; and its SHA-256 (FIPS 180-4) through OpenSSL's EVP
 * interface, for the spec's pin and the report's provenance.
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

/* Pages are handed back in steps of this many bytes. */
#define RELEASE_STEP ((size_t)4 << 20)

static bool read_instead(const char *path, data_file *f, const char **why)
{
    size_t length;
    f->copy = file_read_all(path, &length, why);
    if (!f->copy)
        return false;
    f->bytes = f->copy;
    f->length = length;
    return true;
}

bool data_file_open(const char *path, data_file *f, const char **why)
{
    memset(f, 0, sizeof *f);
    int fd = open(path, O_RDONLY);
    if (fd < 0) {
        *why = strerror(errno);
        return false;
    }
    struct stat st;
    int failure = fstat(fd, &st) != 0 ? errno : S_ISDIR(st.st_mode) ? EISDIR : 0;
    if (failure) {
        *why = strerror(failure);
        close(fd);
        return false;
    }
    if (!S_ISREG(st.st_mode) || st.st_size == 0) {
        /* Pipes and empty files are read the ordinary way. */
        close(fd);
        return read_instead(path, f, why);
    }
    void *map = mmap(NULL, (size_t)st.st_size, PROT_READ, MAP_PRIVATE, fd, 0);
    close(fd);
    if (map == MAP_FAILED)
        return read_instead(path, f, why);
    madvise(map, (size_t)st.st_size, MADV_SEQUENTIAL);
    f->map = map;
    f->bytes = map;
    f->length = (size_t)st.st_size;
    return true;
}

void data_file_close(data_file *f)
{
    if (f->map)
        munmap(f->map, f->length);
    free(f->copy);
    memset(f, 0, sizeof *f);
}

void data_file_release(const data_file *f, size_t *released, const char *upto)
{
    if (!f || !f->map)
        return;
    size_t offset = (size_t)(upto - f->bytes);
    if (offset < *released + RELEASE_STEP)
        return;
    size_t page = (size_t)sysconf(_SC_PAGESIZE);
    size_t start = *released / page * page;
    size_t stop = offset / page * page;
    if (stop > start)
        madvise((char *)f->map + start, stop - start, MADV_DONTNEED);
    *released = stop;
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

void data_sha256_hex(const char *bytes, size_t length, data_file *f, char out[65])
{
    unsigned char digest[EVP_MAX_MD_SIZE];
    unsigned int digest_length = 0;
    EVP_MD_CTX *context = EVP_MD_CTX_new();
    if (!context || !EVP_DigestInit_ex(context, EVP_sha256(), NULL))
        abort();
    size_t released = 0;
    for (size_t done = 0; done < length;) {
        size_t step = length - done < RELEASE_STEP ? length - done : RELEASE_STEP;
        if (!EVP_DigestUpdate(context, bytes + done, step))
            abort();
        done += step;
        data_file_release(f, &released, bytes + done);
    }
    if (!EVP_DigestFinal_ex(context, digest, &digest_length) || digest_length != 32)
        abort();
    EVP_MD_CTX_free(context);
    static const char hex[] = "0123456789abcdef";
    for (unsigned i = 0; i < 32; i++) {
        out[2 * i] = hex[digest[i] >> 4];
        out[2 * i + 1] = hex[digest[i] & 15];
    }
    out[64] = '\0';
}
