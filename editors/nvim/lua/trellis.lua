-- trellis for Neovim (0.7 or newer): filetype and language server.
--
-- Put this directory on 'runtimepath' (or copy lua/trellis.lua into
-- ~/.config/nvim/lua/) and add to init.lua:
--
--   require("trellis").setup()                       -- `trellis` on $PATH
--   require("trellis").setup({ cmd = { "/path/to/trellis", "lsp" } })
--
-- Only APIs present in Neovim 0.7 are used (vim.lsp.start_client and
-- vim.lsp.buf_attach_client; vim.lsp.start arrived in 0.8).

local M = {}

-- Client ids by project root, so every file of a project shares one server.
local clients = {}

-- The nearest directory above `path` holding trellis.toml or .git, else the
-- file's own directory.
local function root_of(path)
  local dir = vim.fn.fnamemodify(path, ":p:h")
  local found = vim.fn.findfile("trellis.toml", dir .. ";")
  if found ~= "" then
    return vim.fn.fnamemodify(found, ":p:h")
  end
  local git = vim.fn.finddir(".git", dir .. ";")
  if git ~= "" then
    return vim.fn.fnamemodify(git, ":p:h:h")
  end
  return dir
end

-- `trellis.parse` from a code lens carries no sentence: ask for one, then
-- let the server parse it and show the tree.
local function parse_command(command, ctx)
  local args = vim.deepcopy((command.arguments or {})[1] or {})
  local client = vim.lsp.get_client_by_id(ctx.client_id)
  if not client then
    return
  end
  local function run(sentence)
    if not sentence or sentence == "" then
      return
    end
    args.sentence = sentence
    args.show = true
    client.request("workspace/executeCommand", { command = "trellis.parse", arguments = { args } }, function() end, ctx.bufnr)
  end
  if args.sentence or args.sentences then
    run(args.sentence)
  else
    vim.ui.input({ prompt = "Sentence to parse: " }, run)
  end
end

-- The trellis client attached to buffer `bufnr`, if any.
local function client_of(bufnr)
  for _, client in pairs(vim.lsp.buf_get_clients(bufnr)) do
    if client.name == "trellis" then
      return client
    end
  end
  return nil
end

-- The 1-based byte column of an LSP position (UTF-16 units) in `fname`.
local function byte_column(fname, position)
  local bufnr = vim.fn.bufnr(fname)
  if bufnr ~= -1 and vim.api.nvim_buf_is_loaded(bufnr) then
    local line = vim.api.nvim_buf_get_lines(bufnr, position.line, position.line + 1, false)[1]
    if line then
      local ok, byte = pcall(vim.str_byteindex, line, position.character, true)
      if ok then
        return byte + 1
      end
    end
  end
  return position.character + 1
end

--- A failed case's reason, all its lines on one quickfix line: a line that
--- ends with ":" runs on into the next ("its most probable tree: (Request
--- …)"), other lines are separated by " — ", and aligned spaces are
--- collapsed.
local function reason_text(lines)
  local text = ""
  for _, line in ipairs(lines or {}) do
    line = vim.trim(line):gsub("%s+", " ")
    if line ~= "" then
      if text == "" then
        text = line
      elseif text:sub(-1) == ":" then
        text = text .. " " .. line
      else
        text = text .. " — " .. line
      end
    end
  end
  return text ~= "" and text or "failed"
end

--- Runs the grammar's test blocks through the server (only the block named
--- `name` when given) and puts every failing case in the quickfix list.
--- `done(result, err)` is called with the server's answer.
function M.run_tests(bufnr, name, done)
  if bufnr == nil or bufnr == 0 then
    bufnr = vim.api.nvim_get_current_buf()
  end
  local client = client_of(bufnr)
  if not client then
    vim.notify("trellis: no language server attached to this buffer", vim.log.levels.ERROR)
    return
  end
  local args = { uri = vim.uri_from_bufnr(bufnr), test = name }
  client.request("workspace/executeCommand", { command = "trellis.runTest", arguments = { args } }, function(err, result)
    if err then
      vim.notify("trellis: " .. err.message, vim.log.levels.ERROR)
      if done then
        done(nil, err)
      end
      return
    end
    local items = {}
    for _, test in ipairs(result.tests or {}) do
      for _, case in ipairs(test.cases or {}) do
        if not case.passed and case.location then
          local fname = vim.uri_to_fname(case.location.uri)
          local start = case.location.range.start
          table.insert(items, {
            filename = fname,
            lnum = start.line + 1,
            col = byte_column(fname, start),
            text = string.format('test "%s": %s "%s" — %s', test.name, case.expect, case.sentence,
              reason_text(case.failure)),
          })
        end
      end
    end
    vim.fn.setqflist({}, " ", { title = "trellis tests", items = items })
    local level = result.failed > 0 and vim.log.levels.WARN or vim.log.levels.INFO
    vim.notify(string.format("trellis: %d cases held, %d failed%s", result.passed, result.failed,
      result.failed > 0 and " (see the quickfix list)" or ""), level)
    if done then
      done(result, nil)
    end
  end, bufnr)
end

-- A test lens runs the tests here, so failures land in the quickfix list.
local function test_command(command, ctx)
  local args = (command.arguments or {})[1] or {}
  M.run_tests(ctx.bufnr, args.test)
end

--- Starts (or reuses) the server for buffer `bufnr` and attaches it.
function M.attach(bufnr, opts)
  local path = vim.api.nvim_buf_get_name(bufnr)
  local root = root_of(path)
  local id = clients[root]
  if not id or not vim.lsp.get_client_by_id(id) then
    id = vim.lsp.start_client({
      name = "trellis",
      cmd = opts.cmd,
      root_dir = root,
      workspace_folders = { { uri = vim.uri_from_fname(root), name = root } },
      commands = { ["trellis.parse"] = parse_command, ["trellis.runTest"] = test_command },
      handlers = opts.handlers,
      on_attach = opts.on_attach,
    })
    clients[root] = id
  end
  if not id then
    vim.notify("trellis: could not start " .. table.concat(opts.cmd, " "), vim.log.levels.ERROR)
    return nil
  end
  vim.lsp.buf_attach_client(bufnr, id)
  return id
end

--- Options: `cmd` (default { "trellis", "lsp" }), `handlers` and
--- `on_attach` as for vim.lsp.start_client.
function M.setup(opts)
  opts = vim.tbl_extend("keep", opts or {}, { cmd = { "trellis", "lsp" } })
  local group = vim.api.nvim_create_augroup("trellis", { clear = true })
  -- Neovim 0.7 only reads vim.filetype.add with g:do_filetype_lua set, so
  -- detect the extension with a plain autocommand too.
  pcall(vim.filetype.add, { extension = { trellis = "trellis" } })
  vim.api.nvim_create_autocmd({ "BufRead", "BufNewFile" }, {
    group = group,
    pattern = "*.trellis",
    command = "setfiletype trellis",
  })
  -- :TrellisTest [name] runs the grammar's tests (or one test block).
  vim.api.nvim_create_user_command("TrellisTest", function(command)
    M.run_tests(0, command.args ~= "" and command.args or nil)
  end, { nargs = "?", desc = "Run the trellis test blocks; failures go to the quickfix list" })
  vim.api.nvim_create_autocmd("FileType", {
    group = group,
    pattern = "trellis",
    callback = function(event)
      vim.bo[event.buf].commentstring = "# %s"
      M.attach(event.buf, opts)
    end,
  })
end

return M
