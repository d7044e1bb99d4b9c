/* Placeholder front end until the command-line module lands. */
#include <stdio.h>
#include <string.h>

int main(int argc, char **argv)
{
	if (argc > 1 && strcmp(argv[1], "--version") == 0) {
		printf("holdcount %s\n", HOLDCOUNT_VERSION);
		return 0;
	}
	fprintf(stderr, "holdcount: no commands yet\n");
	return 2;
}
