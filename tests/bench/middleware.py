"""Server-Timing (W3C Server Timing) for the benchmark: time spent inside Django, in ms.

"app" is the wall time; "cpu" the processor time of the request's own thread,
which other work on the machine (or in the process) hardly changes.
"""

import time


def server_timing(get_response):
    def middleware(request):
        start, cpu = time.perf_counter(), time.thread_time()
        response = get_response(request)
        spent, cpu = (time.perf_counter() - start) * 1000, (time.thread_time() - cpu) * 1000
        previous = response.get("Server-Timing")
        response["Server-Timing"] = f"app;dur={spent:.3f}, cpu;dur={cpu:.3f}" + (f", {previous}" if previous else "")
        return response

    return middleware
