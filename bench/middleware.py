"""Server-Timing (W3C Server Timing) for the benchmark: time spent inside Django, in ms."""

import time


def server_timing(get_response):
    def middleware(request):
        start = time.perf_counter()
        response = get_response(request)
        spent = (time.perf_counter() - start) * 1000
        previous = response.get("Server-Timing")
        response["Server-Timing"] = f"app;dur={spent:.3f}" + (f", {previous}" if previous else "")
        return response

    return middleware
