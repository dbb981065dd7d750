// MPI back end of `moonwright survey`: rank 0 streams designs and hands out one task at a time
// to whichever rank asks (dynamic load balancing) and alone writes the journal and the files.
#include "tools/survey_mpi.hpp"

#include "engine/error.hpp"
#include "tools/commands.hpp"

#include <cstdio>
#include <exception>
#include <mpi.h>
#include <string>

namespace moonwright::cli {

namespace {

enum tag : int { ready = 1, result = 2, task = 3, stop = 4 };

void send_text(const std::string& text, int to, int t) {
    MPI_Send(text.data(), static_cast<int>(text.size()), MPI_CHAR, to, t, MPI_COMM_WORLD);
}

/// Receives the next message from any rank: (source, tag, text).
std::tuple<int, int, std::string> receive_any(int from) {
    MPI_Status status;
    MPI_Probe(from, MPI_ANY_TAG, MPI_COMM_WORLD, &status);
    int count = 0;
    MPI_Get_count(&status, MPI_CHAR, &count);
    std::string text(static_cast<std::size_t>(count), '\0');
    MPI_Recv(text.data(), count, MPI_CHAR, status.MPI_SOURCE, status.MPI_TAG, MPI_COMM_WORLD,
             MPI_STATUS_IGNORE);
    return {status.MPI_SOURCE, status.MPI_TAG, std::move(text)};
}

int coordinator(const survey_request& request, bool quiet, int ranks) {
    std::unique_ptr<survey_session> session;
    std::exception_ptr failure;
    try {
        session = std::make_unique<survey_session>(request);
    } catch (...) {
        failure = std::current_exception();
    }
    int working = ranks - 1;
    while (working > 0) {
        auto [from, t, text] = receive_any(MPI_ANY_SOURCE);
        bool sent = false;
        if (!failure) {
            try {
                if (t == tag::result) session->record_task(survey_result_from_json(text));
                while (auto it = session->next()) {
                    if (it->design) {
                        session->record_design(*it->design);
                        continue;
                    }
                    send_text(survey_task_to_json(*it->task), from, tag::task);
                    sent = true;
                    break;
                }
            } catch (...) {
                failure = std::current_exception();
            }
        }
        if (!sent) {
            send_text("", from, tag::stop);
            --working;
        }
    }
    if (failure) std::rethrow_exception(failure);
    const survey_report r = session->finish();
    if (!quiet) print_survey_report(r, request.out_path, request.summary_path);
    return static_cast<int>(exit_code::ok);
}

int worker(const survey_settings& settings) {
    send_text("", 0, tag::ready);
    for (;;) {
        auto [from, t, text] = receive_any(0);
        (void)from;
        if (t == tag::stop) return static_cast<int>(exit_code::ok);
        const survey_task job = survey_task_from_json(text);
        send_text(survey_result_to_json(run_survey_task(job, settings)), 0, tag::result);
    }
}

} // namespace

std::optional<int> run_survey_mpi(const survey_request& request, bool quiet) {
    int initialized = 0;
    MPI_Initialized(&initialized);
    if (!initialized) MPI_Init(nullptr, nullptr);
    int rank = 0, ranks = 1;
    MPI_Comm_rank(MPI_COMM_WORLD, &rank);
    MPI_Comm_size(MPI_COMM_WORLD, &ranks);
    if (ranks == 1) {
        MPI_Finalize();
        return std::nullopt;
    }
    int code = 0;
    try {
        code = rank == 0 ? coordinator(request, quiet, ranks) : worker(request.settings);
    } catch (const moonwright::error& e) {
        std::fprintf(stderr, "moonwright: %s\n", e.what());
        code = static_cast<int>(e.code());
        if (rank != 0) MPI_Abort(MPI_COMM_WORLD, code); // rank 0 would wait for this one
    } catch (const std::exception& e) {
        // A worker that cannot go on would leave rank 0 waiting: stop every rank.
        std::fprintf(stderr, "moonwright: internal error on rank %d: %s\n", rank, e.what());
        MPI_Abort(MPI_COMM_WORLD, static_cast<int>(exit_code::internal));
    }
    MPI_Finalize();
    return code;
}

} // namespace moonwright::cli
