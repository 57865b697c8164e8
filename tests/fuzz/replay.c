/* SPDX-License-Identifier: MIT */
/*
 * replay.c - runs a fuzz harness's LLVMFuzzerTestOneInput over saved inputs,
 * so `make check` replays every saved corpus (crashes included) with the
 * ordinary compiler and, in CI, under the sanitizers. Linked with one
 * tests/fuzz/fuzz_<parser>.c; arguments are files or directories.
 */
#include <dirent.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

static int run_file(const char *path)
{
	FILE *fp = fopen(path, "rb");
	uint8_t *buf;
	long n;
	if (!fp) {
		fprintf(stderr, "replay: cannot open %s\n", path);
		return 1;
	}
	fseek(fp, 0, SEEK_END);
	n = ftell(fp);
	rewind(fp);
	buf = malloc(n > 0 ? (size_t)n : 1);
	if (!buf || (n > 0 && fread(buf, 1, (size_t)n, fp) != (size_t)n)) {
		fprintf(stderr, "replay: cannot read %s\n", path);
		free(buf);
		fclose(fp);
		return 1;
	}
	fclose(fp);
	LLVMFuzzerTestOneInput(buf, (size_t)n);
	free(buf);
	return 0;
}

static int names_cmp(const void *a, const void *b)
{
	return strcmp(*(char *const *)a, *(char *const *)b);
}

static int run_path(const char *path, int *count)
{
	struct stat st;
	DIR *dir;
	struct dirent *e;
	char **names = NULL;
	size_t n = 0, cap = 0;
	int failed = 0;

	if (stat(path, &st) != 0) {
		fprintf(stderr, "replay: no such file or directory: %s\n", path);
		return 1;
	}
	if (!S_ISDIR(st.st_mode)) {
		(*count)++;
		return run_file(path);
	}
	dir = opendir(path);
	if (!dir)
		return 1;
	while ((e = readdir(dir))) {
		size_t len = strlen(path) + strlen(e->d_name) + 2;
		if (e->d_name[0] == '.')
			continue;
		if (n == cap) {
			char **more = realloc(names, (cap = cap ? cap * 2 : 64) * sizeof *names);
			if (!more)
				break;
			names = more;
		}
		names[n] = malloc(len);
		if (!names[n])
			break;
		snprintf(names[n++], len, "%s/%s", path, e->d_name);
	}
	closedir(dir);
	qsort(names, n, sizeof *names, names_cmp);
	for (size_t i = 0; i < n; i++) {
		failed |= run_path(names[i], count);
		free(names[i]);
	}
	free(names);
	return failed;
}

int main(int argc, char **argv)
{
	int failed = 0, count = 0;
	for (int i = 1; i < argc; i++)
		failed |= run_path(argv[i], &count);
	printf("replay: %d inputs, %s\n", count, failed ? "errors" : "no crash");
	return failed;
}
