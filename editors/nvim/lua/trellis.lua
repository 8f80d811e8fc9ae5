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
      commands = { ["trellis.parse"] = parse_command },
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
