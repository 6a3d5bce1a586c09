// Eight threads sharing one model, each with its own context, give results bit-for-bit
// identical to the same sequence run serially; a context shared by mistake between threads
// answers TL_STATUS_BUSY instead of corrupting memory.
#include "check.hpp"
#include "tieline.hpp"

#include <atomic>
#include <thread>
#include <vector>

struct Point {
    tl_status status;
    size_t phases;
    std::vector<double> values; // fractions, molar volumes, compositions, G/RT, certificate
};

static std::vector<Point> run(tieline::Context& ctx, const std::vector<double>& T, double p,
                              const std::vector<double>& z) {
    std::vector<Point> out;
    tieline::Result r;
    for (double t : T) {
        Point pt{TL_STATUS_OK, 0, {}};
        try {
            ctx.flash(t, p, z, r);
            pt.phases = r.num_phases();
            for (size_t k = 0; k < pt.phases; ++k) {
                tl_phase_info ph = r.phase(k);
                pt.values.push_back(ph.fraction);
                pt.values.push_back(ph.molar_volume);
                for (double x : r.composition(k)) pt.values.push_back(x);
            }
            tl_diagnostics d = r.diagnostics();
            pt.values.push_back(d.gibbs);
            pt.values.push_back(d.certificate);
            pt.values.push_back(double(d.ss_iterations + d.newton_iterations));
        } catch (const tieline::Error& e) {
            pt.status = e.status();
        }
        out.push_back(pt);
    }
    return out;
}

int main() {
    auto model = tieline::Model::from_names({"nitrogen", "methane", "ethane", "n-butane"});
    const std::vector<double> z = {0.05, 0.6, 0.2, 0.15};
    const double p = 4.0e6;
    std::vector<double> T;
    for (int k = 0; k < 60; ++k) T.push_back(180.0 + 2.0 * k); // through the two-phase region and out

    tieline::Context serial_ctx(model);
    const std::vector<Point> serial = run(serial_ctx, T, p, z);
    size_t two_phase = 0;
    for (const auto& pt : serial) two_phase += pt.phases == 2;
    CHECK(two_phase > 5 && two_phase < T.size(), "the sweep crosses the two-phase region");

    const int nthreads = 8;
    std::vector<std::vector<Point>> results(nthreads);
    std::vector<std::thread> threads;
    for (int i = 0; i < nthreads; ++i)
        threads.emplace_back([&, i] {
            tieline::Model shared = model; // a copy shares the same model
            tieline::Context ctx(shared);
            results[i] = run(ctx, T, p, z);
        });
    for (auto& th : threads) th.join();

    for (int i = 0; i < nthreads; ++i) {
        bool same = results[i].size() == serial.size();
        for (size_t k = 0; same && k < serial.size(); ++k) {
            const auto& a = results[i][k];
            const auto& b = serial[k];
            same = a.status == b.status && a.phases == b.phases && a.values.size() == b.values.size();
            for (size_t j = 0; same && j < a.values.size(); ++j) same = t::same(a.values[j], b.values[j]);
        }
        CHECK(same, "thread " + std::to_string(i) + " identical to serial");
    }

    // Misuse: one context driven by two threads at once. Every call either runs or is refused.
    tieline::Context shared_ctx(model);
    std::atomic<int> bad{0}, busy{0}, ok{0};
    auto hammer = [&] {
        tieline::Result r;
        for (int k = 0; k < 200; ++k) {
            tl_status s = tl_context_flash(shared_ctx.get(), T[k % T.size()], p, z.data(), z.size(), nullptr, r.get());
            if (s == TL_STATUS_OK) ++ok;
            else if (s == TL_STATUS_BUSY) ++busy;
            else if (s != TL_STATUS_NOT_CONVERGED) ++bad;
        }
    };
    std::thread a(hammer), b(hammer);
    a.join();
    b.join();
    CHECK(bad == 0, "a shared context gives only OK or BUSY");
    CHECK(ok > 0, "some calls on the shared context ran");
    std::printf("shared context: %d ran, %d refused as busy\n", ok.load(), busy.load());
    return t::finish("test_threads");
}
