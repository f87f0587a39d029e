using System.Diagnostics;

namespace SummaryService.Store.Tests;

public class ConcurrencyTests
{
    [Fact]
    public void Four_writers_two_readers_and_a_roller_leave_every_count_exact()
    {
        var fixture = new StoreFixture(new StoreOptions { ShardCount = 4 });
        string[] routes = ["/cart", "/pay", "/search", "/home", "/login", "/profile", "/orders", "/help"];
        var written = new long[routes.Length];
        var stop = Stopwatch.StartNew();
        var budget = TimeSpan.FromSeconds(5);
        var failures = new System.Collections.Concurrent.ConcurrentQueue<Exception>();

        void Guard(Action body)
        {
            try
            {
                body();
            }
            catch (Exception ex)
            {
                failures.Enqueue(ex);
            }
        }

        var writers = Enumerable.Range(0, 4).Select(w => new Thread(() => Guard(() =>
        {
            var rng = new Random(w);
            var values = new double[500];
            while (stop.Elapsed < budget)
            {
                int route = rng.Next(routes.Length);
                for (int i = 0; i < values.Length; i++)
                {
                    values[i] = rng.NextDouble() * 100;
                }

                fixture.Append(StoreFixture.Batch("web.latency", values, 0, ("route", routes[route])));
                Interlocked.Add(ref written[route], values.Length);
            }
        }))).ToList();

        long now = fixture.NowMs;
        var readers = Enumerable.Range(0, 2).Select(_ => new Thread(() => Guard(() =>
        {
            while (stop.Elapsed < budget)
            {
                var answer = fixture.Query("web.latency", now - 60_000, now + 60_000, "route");
                foreach (var group in answer.Groups)
                {
                    Assert.True(group.Summary.Count > 0);
                }
            }
        }))).ToList();
        var roller = new Thread(() => Guard(() =>
        {
            while (stop.Elapsed < budget)
            {
                fixture.Store.Roll();
                Thread.Sleep(10);
            }
        }));

        var all = writers.Concat(readers).Append(roller).ToList();
        all.ForEach(t => t.Start());
        all.ForEach(t => t.Join());

        Assert.Empty(failures);
        var final = fixture.Query("web.latency", now - 60_000, now + 60_000, "route");
        var counts = final.Groups.ToDictionary(g => g.Labels["route"], g => g.Summary.Count);
        for (int i = 0; i < routes.Length; i++)
        {
            Assert.Equal(written[i], counts.GetValueOrDefault(routes[i]));
        }
    }
}
