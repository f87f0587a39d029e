#!/usr/bin/env bash
# Builds the sketch library of an earlier commit as one assembly, SummaryService.Baseline.dll, so
# that the benchmarks in this folder can run the previous code beside the current code in the same
# BenchmarkDotNet run (same process, same machine state). Usage:
#   tests/SummaryService.Benchmarks/Baseline/build-baseline.sh [COMMIT] [OUT_DIR]
# COMMIT defaults to 83a60e4 (the last commit before log buckets); OUT_DIR to /tmp/summary-baseline.
# Then run, from the repository root:
#   BaselineSketches=/tmp/summary-baseline/bin/SummaryService.Baseline.dll \
#     dotnet run -c Release --project tests/SummaryService.Benchmarks -- --filter '*AgainstPrevious*' --job short
set -euo pipefail
commit="${1:-83a60e4}"
out="${2:-/tmp/summary-baseline}"
root="$(git rev-parse --show-toplevel)"
rm -rf "$out"
mkdir -p "$out/src"
git -C "$root" archive "$commit" src/SummaryService.Sketches protos/summary/v1/sketch.proto | tar -x -C "$out/src"
rm -f "$out/src/src/SummaryService.Sketches/SummaryService.Sketches.csproj"
cat > "$out/SummaryService.Baseline.csproj" <<'PROJECT'
<Project Sdk="Microsoft.NET.Sdk">
  <PropertyGroup>
    <TargetFramework>net10.0</TargetFramework>
    <AssemblyName>SummaryService.Baseline</AssemblyName>
    <Nullable>enable</Nullable>
    <ImplicitUsings>enable</ImplicitUsings>
    <LangVersion>latest</LangVersion>
    <Optimize>true</Optimize>
    <ManagePackageVersionsCentrally>false</ManagePackageVersionsCentrally>
    <NoWarn>$(NoWarn);CS1591</NoWarn>
    <OutputPath>bin/</OutputPath>
    <AppendTargetFrameworkToOutputPath>false</AppendTargetFrameworkToOutputPath>
    <!-- The library's own sources come in as the SDK's default items (everything under src/). -->
  </PropertyGroup>
  <ItemGroup>
    <Protobuf Include="src/protos/summary/v1/sketch.proto" ProtoRoot="src/protos" GrpcServices="None" />
  </ItemGroup>
  <ItemGroup>
    <PackageReference Include="MathNet.Numerics" Version="5.0.0" />
    <PackageReference Include="Google.Protobuf" Version="3.36.2" />
    <PackageReference Include="Grpc.Tools" Version="2.85.0" PrivateAssets="All" />
  </ItemGroup>
</Project>
PROJECT
# Outside the repository, so no Directory.Build.props or central package versions apply.
printf '<Project />\n' > "$out/Directory.Build.props"
printf '<Project />\n' > "$out/Directory.Packages.props"
dotnet build -c Release "$out/SummaryService.Baseline.csproj" -v q -nologo
echo "built $out/bin/SummaryService.Baseline.dll from $commit"
