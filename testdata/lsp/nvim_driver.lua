-- Drives `kickback lsp` from Neovim's built-in client (0.7 and later), headless:
--   KICKBACK=path/to/kickback NETLIST=board.cir RESULT=out.txt \
--     nvim --headless --clean -u NONE -c 'luafile nvim_driver.lua'
-- Opens the netlist, waits for the diagnostics, asks for a hover on the timer XU1, applies
-- the code action that sets RBV to its E12 value and waits for base-underdrive to go.
-- Writes what it saw to RESULT, one `key: value` line each, and quits with 0; on any
-- failure it writes `failed: why` and quits with 1.

local result = assert(io.open(os.getenv('RESULT'), 'w'))
local function say(key, value)
  result:write(key .. ': ' .. tostring(value) .. '\n')
  result:flush()
end
local function fail(why)
  say('failed', why)
  result:close()
  vim.cmd('cquit 1')
end

local function run()
  local netlist = os.getenv('NETLIST')
  vim.cmd('edit ' .. vim.fn.fnameescape(netlist))
  local buf = vim.api.nvim_get_current_buf()
  local client_id = vim.lsp.start_client({
    name = 'kickback',
    cmd = { os.getenv('KICKBACK'), 'lsp', '--debounce-ms', '0' },
    root_dir = vim.fn.fnamemodify(netlist, ':p:h'),
  })
  if not client_id then
    return fail('the client did not start')
  end
  if not vim.lsp.buf_attach_client(buf, client_id) then
    return fail('the client did not attach')
  end

  local function codes()
    local list = {}
    for _, d in ipairs(vim.diagnostic.get(buf)) do
      table.insert(list, (d.lnum + 1) .. ':' .. tostring(d.code) .. ':' .. d.severity)
    end
    table.sort(list)
    return list
  end
  local function has(code)
    for _, d in ipairs(vim.diagnostic.get(buf)) do
      if d.code == code then
        return true
      end
    end
    return false
  end

  if not vim.wait(60000, function() return #vim.diagnostic.get(buf) > 0 end, 50) then
    return fail('no diagnostics within 60 s')
  end
  say('diagnostics', table.concat(codes(), ' '))

  local function line_of(prefix)
    for i, text in ipairs(vim.api.nvim_buf_get_lines(buf, 0, -1, false)) do
      if text:sub(1, #prefix) == prefix then
        return i - 1
      end
    end
    fail('no line starts with ' .. prefix)
  end

  local position = { line = line_of('XU1 '), character = 1 }
  local hovers = vim.lsp.buf_request_sync(buf, 'textDocument/hover', {
    textDocument = vim.lsp.util.make_text_document_params(buf),
    position = position,
  }, 30000)
  local hover = hovers and hovers[client_id] and hovers[client_id].result
  if not hover then
    return fail('no hover on XU1')
  end
  for _, line in ipairs(vim.split(hover.contents.value, '\n')) do
    say('hover', line)
  end

  local rbv = line_of('RBV ')
  local answers = vim.lsp.buf_request_sync(buf, 'textDocument/codeAction', {
    textDocument = vim.lsp.util.make_text_document_params(buf),
    range = { start = { line = rbv, character = 0 }, ['end'] = { line = rbv, character = 0 } },
    context = { diagnostics = {} },
  }, 30000)
  local chosen
  for _, action in ipairs((answers and answers[client_id] and answers[client_id].result) or {}) do
    say('action', action.title)
    if action.title:find('set RBV to', 1, true) then
      chosen = action
    end
  end
  if not chosen then
    return fail('no action sets RBV')
  end
  vim.lsp.util.apply_workspace_edit(chosen.edit, 'utf-16')
  say('line', vim.api.nvim_buf_get_lines(buf, rbv, rbv + 1, false)[1])
  if not vim.wait(60000, function() return not has('base-underdrive') end, 50) then
    return fail('base-underdrive still reported after the fix')
  end
  say('after', table.concat(codes(), ' '))
  vim.lsp.stop_client(client_id)
  result:close()
  vim.cmd('qall!')
end

local ok, err = pcall(run)
if not ok then
  fail(err)
end
