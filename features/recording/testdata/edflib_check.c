/*
 * Test helper for features/recording: a cross-check against EDFlib, the
 * EDF+ reference library packaged by Debian (libedf-dev).
 * edflib_test.go compiles it at test time into a temporary directory:
 *   gcc -O1 -o edflib_check edflib_check.c -ledf
 *
 *   edflib_check write edf|bdf PATH   writes a 10 s EDF+ (or BDF+) file:
 *       "ECG" 256 Hz uV: 1000 sin(2 pi 1.2 t) + 200 sin(2 pi 7 t)
 *       "Resp chest" 32 Hz mV: 500 sin(2 pi 0.25 t)
 *       start 2026-06-01 08:15:30, annotations "lap start" at 2.5 s
 *       (1 s long) and "cool-down" at 7.25 s
 *   edflib_check read PATH            prints the header, every physical
 *       sample and every annotation as EDFlib reads them, one item a line.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <edflib.h>

static int do_write(const char *kind, const char *path) {
	int bdf = strcmp(kind, "bdf") == 0;
	int h = edfopen_file_writeonly(path, bdf ? EDFLIB_FILETYPE_BDFPLUS : EDFLIB_FILETYPE_EDFPLUS, 2);
	if (h < 0) { fprintf(stderr, "open %d\n", h); return 1; }
	int dmax = bdf ? 8388607 : 32767;
	edf_set_samplefrequency(h, 0, 256);
	edf_set_samplefrequency(h, 1, 32);
	edf_set_physical_maximum(h, 0, 3000); edf_set_physical_minimum(h, 0, -3000);
	edf_set_physical_maximum(h, 1, 1000); edf_set_physical_minimum(h, 1, -1000);
	edf_set_digital_maximum(h, 0, dmax); edf_set_digital_minimum(h, 0, -dmax - 1);
	edf_set_digital_maximum(h, 1, dmax); edf_set_digital_minimum(h, 1, -dmax - 1);
	edf_set_label(h, 0, "ECG"); edf_set_label(h, 1, "Resp chest");
	edf_set_physical_dimension(h, 0, "uV"); edf_set_physical_dimension(h, 1, "mV");
	edf_set_startdatetime(h, 2026, 6, 1, 8, 15, 30);
	double ecg[256], resp[32];
	for (int r = 0; r < 10; r++) {
		for (int i = 0; i < 256; i++) {
			double t = r + i / 256.0;
			ecg[i] = 1000 * sin(2 * M_PI * 1.2 * t) + 200 * sin(2 * M_PI * 7 * t);
		}
		for (int i = 0; i < 32; i++) {
			double t = r + i / 32.0;
			resp[i] = 500 * sin(2 * M_PI * 0.25 * t);
		}
		if (edfwrite_physical_samples(h, ecg) || edfwrite_physical_samples(h, resp)) {
			fprintf(stderr, "write failed\n"); return 1;
		}
	}
	edfwrite_annotation_utf8(h, 25000, 10000, "lap start");
	edfwrite_annotation_utf8(h, 72500, -1, "cool-down");
	return edfclose_file(h) ? 1 : 0;
}

static int do_read(const char *path) {
	struct edf_hdr_struct hdr;
	if (edfopen_file_readonly(path, &hdr, EDFLIB_READ_ALL_ANNOTATIONS) < 0) {
		fprintf(stderr, "open error %d\n", hdr.filetype); return 1;
	}
	printf("filetype %d\n", hdr.filetype);
	printf("start %04d-%02d-%02d %02d:%02d:%02d %lld\n", hdr.startdate_year, hdr.startdate_month, hdr.startdate_day,
	       hdr.starttime_hour, hdr.starttime_minute, hdr.starttime_second, hdr.starttime_subsecond);
	printf("signals %d\n", hdr.edfsignals);
	for (int s = 0; s < hdr.edfsignals; s++) {
		struct edf_param_struct *p = &hdr.signalparam[s];
		printf("signal %d %d %lld %s|%s\n", s, p->smp_in_datarecord, p->smp_in_file, p->label, p->physdimension);
		double *buf = malloc(sizeof(double) * (p->smp_in_file + 1));
		int n = edfread_physical_samples(hdr.handle, s, (int)p->smp_in_file, buf);
		printf("samples %d", s);
		for (int i = 0; i < n; i++) printf(" %.10g", buf[i]);
		printf("\n");
		free(buf);
	}
	for (long long i = 0; i < hdr.annotations_in_file; i++) {
		struct edf_annotation_struct a;
		edf_get_annotation(hdr.handle, (int)i, &a);
		printf("annotation %lld %lld %s\n", a.onset, a.duration_l, a.annotation);
	}
	edfclose_file(hdr.handle);
	return 0;
}

int main(int argc, char **argv) {
	if (argc == 4 && strcmp(argv[1], "write") == 0) return do_write(argv[2], argv[3]);
	if (argc == 3 && strcmp(argv[1], "read") == 0) return do_read(argv[2]);
	fprintf(stderr, "usage: edflib_check write edf|bdf PATH | read PATH\n");
	return 2;
}
