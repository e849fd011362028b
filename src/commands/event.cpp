#include "src/commands/event.hpp"

#include <filesystem>
#include <ostream>

#include "src/commands/review.hpp"
#include "src/io/datetime.hpp"
#include "src/io/errors.hpp"
#include "src/io/manifest.hpp"
#include "src/io/output_guard.hpp"
#include "src/route/store.hpp"

namespace cavitas::app {

namespace fs = std::filesystem;

namespace {

std::string trimmed(const std::string& s) {
    const auto b = s.find_first_not_of(" \t");
    if (b == std::string::npos) return "";
    return s.substr(b, s.find_last_not_of(" \t") - b + 1);
}

std::string whose(const std::string& machine, const std::string& point) {
    return machine + (point.empty() ? " (every point)" : " " + point);
}

// The event the options describe, checked: each problem names its option and value.
Event event_of(const EventOptions& o) {
    if (!o.date || !o.what)
        throw UsageError("event: give --date and --what to record an event (or --list to see the machine's), e.g. "
                         "cavitas event " + o.machine + " --date 2026-11-04 --what \"impeller replaced\" --store FILE");
    const auto when = parse_iso8601(*o.date);
    if (!when)
        throw UsageError("--date '" + *o.date + "': not an ISO 8601 date or date-time (e.g. 2026-11-04 or "
                         "2026-11-04T14:30)");
    Event e;
    e.machine = o.machine;
    e.point = o.point;
    e.happened_at = when->text;
    e.days = when->days;
    e.what = trimmed(*o.what);
    if (e.what.empty()) throw UsageError("--what is empty: say what was done, e.g. --what \"impeller replaced\"");
    for (unsigned char c : e.what)
        if (c < 0x20 || c == 0x7f) throw UsageError("--what holds a control character (a line break?): give one line");
    if (e.what.size() > 500) throw UsageError("--what is longer than 500 bytes: say it shorter");
    e.source = "cavitas event";
    return e;
}

void list_events(const HistoryStore& store, const EventOptions& o, const std::string& path, std::ostream& out) {
    const auto events = store.events(o.machine, o.point);
    if (events.empty()) {
        out << "no events of " << o.machine << (o.point.empty() ? "" : " " + o.point) << " in " << path << "\n";
        return;
    }
    out << "events of " << o.machine << (o.point.empty() ? "" : " " + o.point) << " in " << path << ", oldest first:\n";
    for (const auto& e : events)
        out << "  #" << e.id << "  " << e.label() << "  " << (e.point.empty() ? "every point" : "point " + e.point)
            << (e.source.empty() ? std::string() : "  (" + e.source + ")") << "\n";
}

}  // namespace

void run_event(const EventOptions& o, std::ostream& out, std::ostream& err) {
    for (const auto* tag : {&o.machine, &o.point}) {
        if (tag == &o.point && o.point.empty()) continue;
        if (auto why = unusable_as_file_name(*tag))
            throw UsageError(std::string(tag == &o.machine ? "MACHINE" : "POINT") + " '" + *tag + "' " + *why);
    }
    if (o.list && (o.date || o.what)) throw UsageError("event: --list takes no --date or --what");
    const std::optional<Event> e = o.list ? std::nullopt : std::optional<Event>(event_of(o));
    const std::string path = store_path_of(o.store, o.baselines, "event");
    {
        OutputGuard guard;
        guard.input_store(path);
    }
    std::error_code ec;
    if (!fs::is_regular_file(path, ec))
        throw InputError(path + ": no results store here yet (it is created by 'cavitas route'; a route manifest's "
                                "event column records events too)");
    HistoryStore store(path);
    if (o.list) return list_events(store, o, path, out);
    store.check_writable();
    std::int64_t id = 0;
    const bool added = store.add_event(*e, &id);
    if (added) out << "recorded event #" << id << " of " << whose(e->machine, e->point) << ": " << e->label() << " in " << path << "\n";
    else out << "already recorded as event #" << id << " of " << whose(e->machine, e->point) << ": " << e->label() << "; nothing added\n";
    if (store.history(o.machine, o.point).empty())
        err << "note: " << path << " holds no measurements of " << o.machine << (o.point.empty() ? "" : " " + o.point)
            << " yet; check the tag if it should\n";
    out << "'cavitas trend " << o.machine << "' now judges " << (o.point.empty() ? "its points" : "this point")
        << " on the visits from this event on; 'cavitas compare --around-event " << id
        << "' compares the visits either side of it\n";
}

}  // namespace cavitas::app
