"""Where the server's CPU goes under the load generator: reads `perf script` output of a server run
with DOTNET_PerfMapEnabled=1 and DOTNET_EnableWriteXorExecute=0 (see profile-ingest.sh) and puts
each sample in the first part of the ingest path (in the order below) whose frames are on its stack."""
import sys, re, collections
cats = [
 ("JIT (tiering thread)", lambda t, s: t.startswith(".NET Tiered")),
 ("GC threads", lambda t, s: "GC" in t),
 ("log record (build, encode, frame, CRC)", lambda t, s: re.search(r"LogRecordOf|FileBatchLog|WriteAheadLog|RecordFraming|Journal", s)),
 ("sketch update", lambda t, s: re.search(r"SeriesSketch::Add|SeriesSketch::Accumulate", s)),
 ("timeline/buckets (excl. sketch)", lambda t, s: re.search(r"SeriesTimeline", s)),
 ("validation + time runs", lambda t, s: re.search(r"BatchValidator|TimeRun", s)),
 ("snapshot writing (background)", lambda t, s: re.search(r"FileSnapshotStore|SnapshotWriter|ExportShard", s)),
 ("admit/lock/ledger", lambda t, s: re.search(r"ShardedSeriesStore::Admit|ProducerSequences|SeriesKey", s)),
 ("copy into pooled arrays", lambda t, s: re.search(r"RentedBatch", s)),
 ("CalculateSize", lambda t, s: re.search(r"CalculateSize", s)),
 ("protobuf decode: per-value times", lambda t, s: re.search(r"(MergeFrom|ParseFrom|Deserializ)", s) and re.search(r"RepeatedField`1\[System.Int64\]::AddEntriesFrom", s)),
 ("protobuf decode: the rest", lambda t, s: re.search(r"MergeFrom|ParseFrom|InternalMergeFrom|Deserializ|Parser", s)),
 ("reply write", lambda t, s: re.search(r"HttpContextStreamWriter|WriteStreamedMessage|WriteMessageAsync|AnswerInOrder", s)),
 ("budget/channel/session", lambda t, s: re.search(r"IngestBudget|PushStreamSession|Channels", s)),
 ("HTTP/2 + sockets (Kestrel)", lambda t, s: re.search(r"Kestrel|Http2|Pipelines|Sockets|PipeExtensions|HttpContextStreamReader", s)),
 ("queries", lambda t, s: re.search(r"QueryService|StoreSummaries|ReadSteps|ReadAsync", s)),
]
counts = collections.Counter(); total = 0
thread = None; frames = []
def flush():
    global total
    if thread is None: return
    s = "\n".join(frames)
    total += 1
    for name, f in cats:
        if f(thread, s):
            counts[name] += 1; return
    leaf = frames[0] if frames else ""
    if "kallsyms" in leaf: counts["other: kernel"] += 1
    elif "libcoreclr" in leaf: counts["other: runtime (libcoreclr)"] += 1
    elif "clrjit" in leaf: counts["other: JIT on worker"] += 1
    else: counts["other"] += 1
for line in sys.stdin:
    if line.strip() == "":
        flush(); thread = None; frames = []; continue
    if not line.startswith(("\t", " ")):
        thread = line.split("  ")[0].strip()
        m = re.match(r"^(.*?)\s+\d+(/\d+)?\s", line)
        thread = m.group(1) if m else line[:16]
        continue
    frames.append(line.strip())
flush()
for k, v in counts.most_common():
    print(f"{100.0*v/total:6.1f}%  {k}")
print("samples", total)
