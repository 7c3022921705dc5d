// Bundle src/index.ts into the Python package's static folder.
//   node build.mjs           one minified build
//   node build.mjs --watch   rebuild on every change (for anywidget's hot reload)
import * as esbuild from "esbuild";

const watch = process.argv.includes("--watch");

/** @type {import("esbuild").BuildOptions} */
const options = {
  entryPoints: ["src/index.ts"],
  outfile: "../src/strayline/static/table.js",
  bundle: true,
  format: "esm",
  target: ["es2020"],
  minify: !watch,
  sourcemap: watch ? "inline" : false,
  legalComments: "none",
  logLevel: "info",
};

if (watch) {
  const context = await esbuild.context(options);
  await context.watch();
  console.log("watching src/ for changes (Ctrl-C to stop)");
} else {
  await esbuild.build(options);
}
