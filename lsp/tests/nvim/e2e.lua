-- Drives `trellis lsp` through Neovim's built-in LSP client (0.7 API) and
-- writes what the client received to $TRELLIS_OUT as JSON. Started by
-- lsp/tests/neovim.rs as: nvim --headless --clean -u e2e.lua
--
-- Environment: TRELLIS_BIN (the trellis binary), TRELLIS_PLUGIN (the
-- editors/nvim directory), TRELLIS_BROKEN (a copy of a broken grammar),
-- TRELLIS_GOOD (a copy of a clean grammar), TRELLIS_OUT (output file).

local out = { steps = {}, errors = {} }
local published = {} -- uri -> list of publishDiagnostics params, in order
local WAIT = 30000

local function step(name, value)
  out.steps[name] = value
end

local function finish()
  local f = assert(io.open(os.getenv("TRELLIS_OUT"), "w"))
  f:write(vim.fn.json_encode(out))
  f:close()
  vim.cmd("qall!")
end

local function wait_for(what, predicate)
  local ok = vim.wait(WAIT, predicate, 20)
  if not ok then
    error("timed out waiting for " .. what)
  end
end

local function latest(uri)
  local list = published[uri]
  return list and list[#list] or nil
end

local function has_code(params, code)
  for _, d in ipairs(params and params.diagnostics or {}) do
    if d.code == code then
      return d
    end
  end
  return nil
end

local function find_line(bufnr, pattern)
  for i, line in ipairs(vim.api.nvim_buf_get_lines(bufnr, 0, -1, false)) do
    local col = line:find(pattern)
    if col then
      return i - 1, col - 1
    end
  end
  error("no line matches " .. pattern)
end

-- The single response of our client to a request, or an error.
local function request(bufnr, method, params)
  local responses, err = vim.lsp.buf_request_sync(bufnr, method, params, WAIT)
  if not responses then
    error(method .. " failed: " .. tostring(err))
  end
  for _, response in pairs(responses) do
    return response
  end
  error(method .. ": no response")
end

local function run()
  vim.opt.runtimepath:prepend(os.getenv("TRELLIS_PLUGIN"))
  local trellis = require("trellis")
  trellis.setup({
    cmd = { os.getenv("TRELLIS_BIN"), "lsp" },
    handlers = {
      ["textDocument/publishDiagnostics"] = function(err, params, ctx, config)
        published[params.uri] = published[params.uri] or {}
        table.insert(published[params.uri], params)
        return vim.lsp.handlers["textDocument/publishDiagnostics"](err, params, ctx, config)
      end,
    },
  })

  -- 1. A broken grammar: the client attaches and diagnostics arrive.
  vim.cmd("edit " .. vim.fn.fnameescape(os.getenv("TRELLIS_BROKEN")))
  local broken = vim.api.nvim_get_current_buf()
  step("filetype", vim.bo[broken].filetype)
  local broken_uri = vim.uri_from_bufnr(broken)
  wait_for("the client to attach", function()
    return #vim.lsp.buf_get_clients(broken) > 0
  end)
  step("attached", true)
  wait_for("diagnostics of the broken grammar", function()
    return latest(broken_uri) ~= nil
  end)
  step("diagnostics", latest(broken_uri))
  step("shown_diagnostic_count", #vim.diagnostic.get(broken))

  -- 2. Hover and definition on the reference to `Island` in `Order`.
  local line, col = find_line(broken, '"to" Island')
  col = col + #'"to" '
  local position = { textDocument = { uri = broken_uri }, position = { line = line, character = col + 1 } }
  step("hover_position", position.position)
  step("hover", request(broken, "textDocument/hover", position))
  step("definition", request(broken, "textDocument/definition", position))

  -- 3. Parsing a grammar with errors is refused.
  step("parse_broken", request(broken, "workspace/executeCommand", {
    command = "trellis.parse",
    arguments = { { uri = broken_uri, sentence = "one ticket to tolsey" } },
  }))

  -- 4. The quick fix for `sum-not-one`, applied by the client.
  local sum = has_code(latest(broken_uri), "sum-not-one")
  if not sum then
    error("no sum-not-one diagnostic")
  end
  local actions = request(broken, "textDocument/codeAction", {
    textDocument = { uri = broken_uri },
    range = sum.range,
    context = { diagnostics = { sum } },
  })
  step("code_actions", actions)
  local fix = nil
  for _, action in ipairs(actions.result or {}) do
    if action.kind == "quickfix" and action.edit then
      fix = fix or action
    end
  end
  if not fix then
    error("no quick fix offered")
  end
  step("applied_fix", fix.title)
  vim.lsp.util.apply_workspace_edit(fix.edit, "utf-16")
  local count_before = #published[broken_uri]
  wait_for("diagnostics after the fix", function()
    return #published[broken_uri] > count_before
      and latest(broken_uri).version == vim.lsp.util.buf_versions[broken]
  end)
  step("diagnostics_after_fix", latest(broken_uri))

  -- 5. A clean grammar: parse a sentence through executeCommand.
  vim.cmd("edit " .. vim.fn.fnameescape(os.getenv("TRELLIS_GOOD")))
  local good = vim.api.nvim_get_current_buf()
  local good_uri = vim.uri_from_bufnr(good)
  wait_for("diagnostics of the clean grammar", function()
    return latest(good_uri) ~= nil
  end)
  step("good_diagnostics", latest(good_uri))
  step("parse", request(good, "workspace/executeCommand", {
    command = "trellis.parse",
    arguments = { { uri = good_uri, sentences = { "two return tickets to tolsey", "tickets tickets" } } },
  }))
  step("lenses", request(good, "textDocument/codeLens", { textDocument = { uri = good_uri } }))
  -- 6. Run the grammar's test blocks.
  step("run_tests", request(good, "workspace/executeCommand", {
    command = "trellis.runTest",
    arguments = { { uri = good_uri } },
  }))

  -- 7. Add a failing case and run the tests through the plugin's command:
  -- the failure lands in the quickfix list at the case's line.
  local last = vim.api.nvim_buf_line_count(good)
  vim.api.nvim_buf_set_lines(good, last, last, false, {
    'test "added in the editor" {',
    '  reject "two return tickets to tolsey"',
    "}",
  })
  wait_for("diagnostics of the edited grammar", function()
    local d = latest(good_uri)
    return d and d.version == vim.lsp.util.buf_versions[good]
  end)
  local finished = false
  trellis.run_tests(good, nil, function()
    finished = true
  end)
  wait_for("the test run", function()
    return finished
  end)
  local qf = {}
  for _, item in ipairs(vim.fn.getqflist()) do
    table.insert(qf, { lnum = item.lnum, col = item.col, text = item.text })
  end
  step("quickfix", { items = qf, failing_line = last + 2 })
end

local ok, err = pcall(run)
if not ok then
  table.insert(out.errors, tostring(err))
end
out.log = vim.lsp.get_log_path()
finish()
