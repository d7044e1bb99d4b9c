#include "holdcount/error.h"

#include <stdarg.h>
#include <stdio.h>
#include <string.h>

void hc_error_clear(struct hc_error *err)
{
	if (!err)
		return;
	err->code = HC_OK;
	err->message[0] = '\0';
}

int hc_error(struct hc_error *err, int code, const char *fmt, ...)
{
	va_list ap;

	if (!err)
		return code;
	err->code = code;
	va_start(ap, fmt);
	vsnprintf(err->message, sizeof err->message, fmt, ap);
	va_end(ap);
	return code;
}

void hc_error_prefix(struct hc_error *err, const char *prefix)
{
	char tmp[HC_ERROR_MESSAGE_MAX];

	if (!err || !prefix)
		return;
	/* A message cut at the buffer's end is still the right message; the
	 * length is looked at only to say so to the compiler. */
	if (snprintf(tmp, sizeof tmp, "%s: %s", prefix, err->message) < 0)
		return;
	memcpy(err->message, tmp, sizeof tmp);
}

const char *hc_status_name(int code)
{
	switch (code) {
	case HC_OK: return "ok";
	case HC_EPOLICY: return "policy failed";
	case HC_EUSAGE: return "usage error";
	case HC_EDATA: return "data error";
	case HC_EIO: return "i/o error";
	case HC_ENOMEM: return "out of memory";
	case HC_EINTERNAL: return "internal error";
	case HC_EINTERRUPT: return "interrupted";
	case HC_ERESOURCE: return "resource limit";
	case HC_ERENDER: return "renderer failed";
	case HC_EINSUFFICIENT: return "insufficient data";
	default: return "unknown error";
	}
}
